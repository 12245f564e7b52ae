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
	/** Deletes the temporary file (and its folder). Safe to call twice. */
	remove(): Promise<void>;
}

/** Writes `source` to a new temporary file; `inspect` sees every chunk first and may throw to refuse the file. */
export async function spoolToTempFile(source: AsyncIterable<Uint8Array> | Uint8Array, inspect: (chunk: Uint8Array) => void = () => {}): Promise<SpooledFile> {
	const dir = await fs.promises.mkdtemp(path.join(os.tmpdir(), 'glasscrib-upload-'));
	const file = path.join(dir, 'upload');
	let removed = false;
	const remove = async () => {
		if (removed) return;
		removed = true;
		await fs.promises.rm(dir, { recursive: true, force: true });
	};
	const hash = createHash('sha256');
	let size = 0;
	const tap = new Transform({
		transform(chunk: Buffer, _enc, done) {
			try {
				inspect(chunk);
				hash.update(chunk);
				size += chunk.byteLength;
				done(null, chunk);
			} catch (err) {
				done(err as Error);
			}
		}
	});
	try {
		const input = source instanceof Uint8Array ? [Buffer.from(source.buffer, source.byteOffset, source.byteLength)] : source;
		await pipeline(input, tap, fs.createWriteStream(file, { flags: 'wx', mode: 0o600 }));
		return { path: file, size, sha256: hash.digest('hex'), remove };
	} catch (err) {
		await remove();
		throw err;
	}
}
