import { Readable } from 'node:stream';
import busboy from 'busboy';
import { DomainError } from '$lib/server/errors';

/** A file part of a streamed multipart body, as `readMultipartStream` hands it over. */
export interface FilePart {
	stream: Readable;
	filename: string;
	mimeType: string;
}

const tooLarge = (maxBytes: number) =>
	new DomainError(413, 'too-large', `The upload is too large: at most ${Math.round(maxBytes / (1024 * 1024))} MB may be sent at once.`, { file: 'The file is too large.' });

/**
 * Reads a multipart/form-data body as a stream (busboy), without holding the file in memory: the
 * part named `fileField` goes to `handleFile` as it arrives (it must consume the stream, e.g. into a
 * temporary file); other files are skipped; text fields are collected (small ones only). Resolves
 * when the body has been read and `handleFile` has finished; a failure of either stops reading.
 * 415 for another type, 413 when the declared length is above `maxBodyBytes` or the server's own
 * body limit stops it, 400 when it does not parse.
 */
export async function readMultipartStream<T>(
	request: Request,
	opts: {
		fileField?: string;
		maxBodyBytes: number;
		maxFileBytes: number;
		handleFile: (part: FilePart) => Promise<T>;
		/** Undoes what `handleFile` made when the body fails after it (e.g. removes a temporary file). */
		discard?: (file: T) => Promise<void>;
	}
): Promise<{ fields: Record<string, string>; file: T | null }> {
	const fileField = opts.fileField ?? 'file';
	const type = request.headers.get('content-type') ?? '';
	if (!type.toLowerCase().startsWith('multipart/form-data')) {
		throw new DomainError(415, 'unsupported-media-type', `Send the file as multipart/form-data (field "${fileField}").`);
	}
	const length = Number(request.headers.get('content-length') ?? NaN);
	if (Number.isFinite(length) && length > opts.maxBodyBytes) throw tooLarge(opts.maxBodyBytes);
	if (!request.body) throw new DomainError(400, 'invalid-multipart', 'The upload is empty.');
	let parser: busboy.Busboy;
	try {
		// fileSize one byte over the limit: the handler sees that byte and refuses the file (busboy alone would cut it silently).
		parser = busboy({ headers: { 'content-type': type }, defParamCharset: 'utf8', limits: { files: 5, fields: 40, fieldSize: 256 * 1024, parts: 50, fileSize: opts.maxFileBytes + 1 } });
	} catch {
		throw new DomainError(400, 'invalid-multipart', 'The upload could not be read as multipart/form-data.');
	}
	const body = Readable.fromWeb(request.body as import('node:stream/web').ReadableStream<Uint8Array>);
	return new Promise((resolve, reject) => {
		const fields: Record<string, string> = {};
		let handling: Promise<T> | null = null;
		let settled = false;
		let streamCut = false;
		const fail = (err: unknown) => {
			if (settled) return;
			settled = true;
			body.unpipe(parser);
			parser.destroy();
			// Read the rest and drop it (the server's body limit caps it), rather than cutting the connection: a client
			// still sending then gets this answer instead of a broken connection.
			body.on('data', () => {});
			body.resume();
			reject(err);
			handling?.then((file) => opts.discard?.(file)).catch(() => {});
		};
		parser.on('field', (name, value, info) => {
			if (info.valueTruncated) return fail(new DomainError(400, 'invalid-input', `The field "${name}" is too long.`, { [name]: 'Too long.' }));
			fields[name] = value;
		});
		parser.on('file', (name, stream, info) => {
			// A body cut off inside a file makes busboy emit 'error' on the file's stream too ("Unexpected end
			// of form"): without a listener that error is unhandled and ends the whole process. The parser's own
			// 'error' answers the request (400); a handler that fails on the cut stream is answered 400 as well.
			stream.on('error', () => {
				streamCut = true;
			});
			if (name !== fileField || handling) {
				stream.resume(); // not ours: skipped
				return;
			}
			handling = opts.handleFile({ stream, filename: info.filename ?? '', mimeType: info.mimeType });
			handling.catch((err) => {
				stream.resume();
				fail(streamCut && !(err instanceof DomainError) ? new DomainError(400, 'invalid-multipart', 'The upload was cut off before its end.') : err);
			});
		});
		parser.on('error', () => fail(new DomainError(400, 'invalid-multipart', 'The upload could not be read as multipart/form-data.')));
		parser.on('close', () => {
			if (settled) return;
			(handling ?? Promise.resolve(null)).then(
				(file) => {
					if (settled) return;
					settled = true;
					resolve({ fields, file });
				},
				fail
			);
		});
		body.on('error', (err) => {
			const status = err && typeof err === 'object' && 'status' in err ? (err as { status: number }).status : 0;
			fail(status === 413 ? tooLarge(opts.maxBodyBytes) : new DomainError(400, 'invalid-multipart', 'The upload was interrupted.'));
		});
		body.pipe(parser);
	});
}
