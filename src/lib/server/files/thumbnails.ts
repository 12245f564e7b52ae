/**
 * Thumbnails of part photos, made with jimp (pure JS; no native image library) in a worker thread,
 * never on the request thread: decoding a large photo takes seconds of CPU, during which the
 * request thread would answer nobody. One worker per photo, one photo at a time per process, with a
 * memory cap (`resourceLimits`) and a time limit; the caller checks the pixel count from the header
 * first (image-size.ts), so the worker only ever sees photos of at most MAX_IMAGE_MEGAPIXELS.
 *
 * Worker entry: as in the solver's pool.ts, thumbnail-worker.ts is imported dynamically, so the
 * build emits it as its own chunk and the worker loads that chunk by its URL. Under vitest, tsx or
 * `vite dev` the URL is a .ts file: it is then bundled once with esbuild into a temporary .mjs.
 */
import { Worker } from 'node:worker_threads';
import { workerFileOf } from '$lib/server/worker-file';
import type { ThumbnailJob, ThumbnailReply } from './thumbnail-worker';
import { MAX_IMAGE_MEGAPIXELS } from './image-size';

/** Longest side of a thumbnail, px. */
export const THUMBNAIL_MAX_PX = 320;

/** Time a worker may take for one photo (a 29 MP PNG took 6 s here, 23 s with the machine loaded 8-fold). */
export const THUMBNAIL_TIMEOUT_MS = 60_000;

/**
 * Memory cap of a worker's JavaScript heap. The decoded bitmap (4 bytes per pixel, at most 120 MB at
 * 30 MP) and the JPEG decoder's buffers are ArrayBuffers outside that heap: the pixel cap bounds the
 * first, jpeg-js's own 512 MB limit (passed explicitly) the second.
 */
export const THUMBNAIL_HEAP_MB = 512;

export interface Thumbnail {
	png: Buffer;
	width: number;
	height: number;
	/** Size of the original image, px. */
	sourceWidth: number;
	sourceHeight: number;
}

/** The worker ran out of time or memory (not a damaged file: those give null). */
export class ThumbnailFailed extends Error {
	constructor(
		readonly reason: 'timeout' | 'out-of-memory' | 'crashed',
		message: string
	) {
		super(message);
	}
}

let workerUrl: Promise<URL> | null = null;

async function bundleWorker(): Promise<URL> {
	const mod = await import('./thumbnail-worker');
	return workerFileOf(mod.selfUrl, 'thumbnail-worker', { logLevel: 'error', requireShim: true });
}

function workerFile(): Promise<URL> {
	if (!workerUrl) {
		workerUrl = bundleWorker();
		workerUrl.catch(() => (workerUrl = null));
	}
	return workerUrl;
}

/** One photo at a time per process: two large photos at once would double the memory. */
let queue: Promise<unknown> = Promise.resolve();

function runWorker(file: URL, bytes: Uint8Array, maxPx: number, timeoutMs: number): Promise<ThumbnailReply> {
	// A private copy whose buffer is handed over to the worker (the caller keeps its bytes).
	const copy = new Uint8Array(bytes.byteLength);
	copy.set(bytes);
	const job: ThumbnailJob = { mark: 'glasscrib-thumbnail-worker', bytes: copy, maxPx, maxMegapixels: MAX_IMAGE_MEGAPIXELS };
	return new Promise<ThumbnailReply>((resolve, reject) => {
		const worker = new Worker(file, {
			workerData: job,
			transferList: [copy.buffer],
			resourceLimits: { maxOldGenerationSizeMb: THUMBNAIL_HEAP_MB, maxYoungGenerationSizeMb: 32 }
		});
		let settled = false;
		const finish = (fn: () => void) => {
			if (settled) return;
			settled = true;
			clearTimeout(timer);
			fn();
			void worker.terminate();
		};
		const timer = setTimeout(
			() => finish(() => reject(new ThumbnailFailed('timeout', `no thumbnail after ${Math.round(timeoutMs / 1000)} s`))),
			timeoutMs
		);
		worker.once('message', (reply: ThumbnailReply) => finish(() => resolve(reply)));
		worker.once('error', (err: Error & { code?: string }) =>
			finish(() =>
				reject(
					err.code === 'ERR_WORKER_OUT_OF_MEMORY'
						? new ThumbnailFailed('out-of-memory', 'the photo needs more memory than a thumbnail may use')
						: new ThumbnailFailed('crashed', err.message)
				)
			)
		);
		worker.once('exit', (code) => finish(() => reject(new ThumbnailFailed('crashed', `the thumbnail worker stopped (exit ${code})`))));
	});
}

/**
 * A PNG no larger than `maxPx` on either side, keeping the aspect ratio; small images are not enlarged.
 * Made in a worker thread. Returns null when jimp cannot decode the bytes (a damaged or disguised
 * image); throws ThumbnailFailed when the worker runs out of time or memory.
 */
export async function makeThumbnail(
	bytes: Uint8Array,
	maxPx = THUMBNAIL_MAX_PX,
	opts: { timeoutMs?: number } = {}
): Promise<Thumbnail | null> {
	const file = await workerFile();
	const turn = queue.then(() => runWorker(file, bytes, maxPx, opts.timeoutMs ?? THUMBNAIL_TIMEOUT_MS));
	queue = turn.catch(() => undefined);
	const reply = await turn;
	if (!reply.ok) return null;
	const png = Buffer.from(reply.png.buffer, reply.png.byteOffset, reply.png.byteLength);
	return { png, width: reply.width, height: reply.height, sourceWidth: reply.sourceWidth, sourceHeight: reply.sourceHeight };
}
