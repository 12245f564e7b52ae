/**
 * The object store (S3; s3rver locally). Framework-free: `createObjectStore(config)` is used by the
 * app (see store.ts), the tests and the bench. Every failure to reach S3 becomes `StorageUnavailable`
 * (503), so routes can answer "the file store is down" instead of a 500.
 */
import fs from 'node:fs';
import { Readable } from 'node:stream';
import {
	CreateBucketCommand,
	DeleteObjectCommand,
	GetObjectCommand,
	HeadBucketCommand,
	PutObjectCommand,
	S3Client,
	S3ServiceException
} from '@aws-sdk/client-s3';
import { DomainError, NotFound } from '$lib/server/errors';

export interface ObjectStoreConfig {
	endpoint?: string;
	bucket: string;
	region: string;
	accessKeyId: string;
	secretAccessKey: string;
	/** Overrides of S3_TIMEOUTS (tests). */
	timeouts?: Partial<typeof S3_TIMEOUTS>;
}

/**
 * Time limits of every S3 call, so that an S3 that hangs (accepts and never answers) gives a 503
 * within about 10 s instead of holding the request:
 * - connectMs: to open the TCP connection;
 * - idleMs: the longest silence on an open connection (a hung server trips it; a slow upload that
 *   keeps moving does not);
 * - totalMs: the whole call, retries included (`abortSignal`), plus `perMiBMs` per MiB of a body,
 *   so a 25 MB PDF on a slow link still gets its time.
 * The SDK's own `requestTimeout` only logs a warning unless told to throw: it is not relied on.
 */
export const S3_TIMEOUTS = { connectMs: 2000, idleMs: 4000, totalMs: 9500, perMiBMs: 2000, maxAttempts: 2 };

/** S3 (or the network to it) is down or refused the request. */
export class StorageUnavailable extends DomainError {
	constructor(cause?: unknown) {
		super(503, 'storage-unavailable', 'The file store is not reachable right now; nothing was saved. Try again in a minute.');
		this.cause = cause;
	}
}

/** The object does not exist (deleted behind our back, or a wrong key). */
export class ObjectMissing extends NotFound {
	constructor(key: string) {
		super(`The stored file ${key} is missing from the file store.`, 'object-missing');
	}
}

export interface StoredObject {
	body: Readable;
	contentType: string | undefined;
	contentLength: number | undefined;
	metadata: Record<string, string>;
}

export interface ObjectStore {
	readonly bucket: string;
	/** Creates the bucket when it does not exist (idempotent). */
	ensureBucket(): Promise<void>;
	put(key: string, body: Uint8Array, contentType: string, metadata?: Record<string, string>): Promise<void>;
	/** Stores a local file, streamed from disk (uploads spooled to a temporary file). */
	putFile(key: string, file: string, contentType: string, metadata?: Record<string, string>): Promise<void>;
	get(key: string): Promise<StoredObject>;
	delete(key: string): Promise<void>;
}

function isMissing(err: unknown): boolean {
	return err instanceof S3ServiceException && (err.name === 'NoSuchKey' || err.name === 'NotFound' || err.$metadata?.httpStatusCode === 404);
}

function isMissingBucket(err: unknown): boolean {
	return err instanceof S3ServiceException && (err.name === 'NoSuchBucket' || err.name === 'NotFound' || err.$metadata?.httpStatusCode === 404);
}

/** S3 metadata travels in HTTP headers: keep it ASCII by percent-encoding. */
export function encodeMetadata(meta: Record<string, string>): Record<string, string> {
	return Object.fromEntries(Object.entries(meta).map(([k, v]) => [k, encodeURIComponent(v)]));
}

export function decodeMetadata(meta: Record<string, string> | undefined): Record<string, string> {
	return Object.fromEntries(
		Object.entries(meta ?? {}).map(([k, v]) => {
			try {
				return [k, decodeURIComponent(v)];
			} catch {
				return [k, v];
			}
		})
	);
}

export function createObjectStore(config: ObjectStoreConfig): ObjectStore {
	const limits = { ...S3_TIMEOUTS, ...config.timeouts };
	const client = new S3Client({
		region: config.region,
		endpoint: config.endpoint || undefined,
		forcePathStyle: !!config.endpoint,
		credentials: { accessKeyId: config.accessKeyId, secretAccessKey: config.secretAccessKey },
		// s3rver stores streamed uploads with their chunk framing unless checksums are only sent when required (STACK.md).
		requestChecksumCalculation: 'WHEN_REQUIRED',
		responseChecksumValidation: 'WHEN_REQUIRED',
		maxAttempts: limits.maxAttempts,
		requestHandler: { connectionTimeout: limits.connectMs, socketTimeout: limits.idleMs }
	});
	const Bucket = config.bucket;
	let bucketReady: Promise<void> | null = null;

	/** Runs one S3 call under the total time limit (longer by `perMiBMs` for each MiB of a body). */
	const wrap = async <T>(fn: (opts: { abortSignal: AbortSignal }) => Promise<T>, key?: string, bodyBytes = 0): Promise<T> => {
		// A timer that is cleared once the call has its answer: a download's body may stream for longer.
		const controller = new AbortController();
		const timer = setTimeout(() => controller.abort(new Error('S3 call over its time limit')), limits.totalMs + Math.ceil(bodyBytes / (1024 * 1024)) * limits.perMiBMs);
		try {
			return await fn({ abortSignal: controller.signal });
		} catch (err) {
			if (key && isMissing(err)) throw new ObjectMissing(key);
			if (err instanceof DomainError) throw err;
			throw new StorageUnavailable(err);
		} finally {
			clearTimeout(timer);
		}
	};

	const ensureBucket = () => {
		bucketReady ??= wrap(async (opts) => {
			try {
				await client.send(new HeadBucketCommand({ Bucket }), opts);
			} catch (err) {
				if (!isMissingBucket(err)) throw err;
				await client.send(new CreateBucketCommand({ Bucket }), opts).catch((e) => {
					if (!(e instanceof S3ServiceException && /BucketAlreadyOwnedByYou|BucketAlreadyExists/.test(e.name))) throw e;
				});
			}
		}).catch((err) => {
			bucketReady = null; // try again next time
			throw err;
		});
		return bucketReady;
	};

	return {
		bucket: Bucket,
		ensureBucket,
		async put(key, body, contentType, metadata = {}) {
			await ensureBucket();
			await wrap(
				(opts) =>
					client.send(
						new PutObjectCommand({
							Bucket,
							Key: key,
							Body: body,
							ContentType: contentType,
							ContentLength: body.byteLength,
							Metadata: encodeMetadata(metadata)
						}),
						opts
					),
				undefined,
				body.byteLength
			);
		},
		async putFile(key, file, contentType, metadata = {}) {
			await ensureBucket();
			const { size } = await fs.promises.stat(file);
			await wrap(
				(opts) =>
					client.send(
						new PutObjectCommand({
							Bucket,
							Key: key,
							Body: fs.createReadStream(file),
							ContentType: contentType,
							ContentLength: size,
							Metadata: encodeMetadata(metadata)
						}),
						opts
					),
				undefined,
				size
			);
		},
		async get(key) {
			await ensureBucket();
			// The limit covers getting the answer's headers; the body then streams (the idle limit still applies).
			const out = await wrap((opts) => client.send(new GetObjectCommand({ Bucket, Key: key }), opts), key);
			return {
				body: out.Body as Readable,
				contentType: out.ContentType,
				contentLength: out.ContentLength,
				metadata: decodeMetadata(out.Metadata)
			};
		},
		async delete(key) {
			await ensureBucket();
			await wrap((opts) => client.send(new DeleteObjectCommand({ Bucket, Key: key }), opts));
		}
	};
}

/** The store configured from environment variables (S3_ENDPOINT, S3_BUCKET, ...). */
export function objectStoreFromEnv(env: Record<string, string | undefined>): ObjectStore {
	if (!env.S3_BUCKET) throw new Error('S3_BUCKET is not set');
	return createObjectStore({
		endpoint: env.S3_ENDPOINT,
		bucket: env.S3_BUCKET,
		region: env.S3_REGION || 'us-east-1',
		accessKeyId: env.S3_ACCESS_KEY_ID || '',
		secretAccessKey: env.S3_SECRET_ACCESS_KEY || ''
	});
}
