/**
 * Uploads go to a temporary file as they arrive, never whole into memory: the bytes are hashed
 * (SHA-256) and shown to an `inspect` callback (streaming checks that may refuse the file by
 * throwing) on the way. The caller removes the file when it is done with it (`remove`, idempotent);
 * a refused or failed upload leaves no file behind.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Transform } from 'node:stream';
import { pipeline } from 'node:stream/promises';

export interface SpooledFile {
	path: string;
	size: number;
	sha256: string;
	/** The first bytes of the file (at most `headBytes`), for checks of its type. */
	head: Uint8Array;
	/** Deletes the temporary file (and its folder). Safe to call twice. */
	remove(): Promise<void>;
}

/** What the bytes so far look like, as `inspect` sees them. */
export interface SpoolProgress {
	/** Bytes so far, this chunk included. */
	size: number;
	/** The first bytes so far (at most `headBytes`). */
	head: Uint8Array;
}

/**
 * Writes `source` to a new temporary file; `inspect` sees every chunk first, with the size and the
 * first `headBytes` bytes so far, and may throw to refuse the file.
 */
export async function spoolToTempFile(
	source: AsyncIterable<Uint8Array> | Uint8Array,
	inspect: (chunk: Uint8Array, so: SpoolProgress) => void = () => {},
	headBytes = 8192
): Promise<SpooledFile> {
	const dir = await fs.promises.mkdtemp(path.join(os.tmpdir(), 'glasscrib-upload-'));
	const file = path.join(dir, 'upload');
	let removed = false;
	const remove = async () => {
		if (removed) return;
		removed = true;
		await fs.promises.rm(dir, { recursive: true, force: true });
	};
	const hash = createHash('sha256');
	const headBuffer = new Uint8Array(headBytes);
	const so: SpoolProgress = { size: 0, head: headBuffer.subarray(0, 0) };
	const tap = new Transform({
		transform(chunk: Buffer, _enc, done) {
			try {
				so.size += chunk.byteLength;
				if (so.head.byteLength < headBytes) {
					const take = chunk.subarray(0, headBytes - so.head.byteLength);
					headBuffer.set(take, so.head.byteLength);
					so.head = headBuffer.subarray(0, so.head.byteLength + take.byteLength);
				}
				inspect(chunk, so);
				hash.update(chunk);
				done(null, chunk);
			} catch (err) {
				done(err as Error);
			}
		}
	});
	try {
		const input = source instanceof Uint8Array ? [Buffer.from(source.buffer, source.byteOffset, source.byteLength)] : source;
		await pipeline(input, tap, fs.createWriteStream(file, { flags: 'wx', mode: 0o600 }));
		return { path: file, size: so.size, sha256: hash.digest('hex'), head: so.head, remove };
	} catch (err) {
		await remove();
		throw err;
	}
}
