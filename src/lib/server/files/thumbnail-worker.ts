/**
 * The thumbnail worker thread: decodes one photo with jimp, scales it to fit, encodes a PNG and
 * replies once. Started by thumbnails.ts with `new Worker(selfUrl)` (one worker per photo, with a
 * memory cap and a time limit); on the main thread this module only exports its own URL. Imports
 * nothing from the framework (no `$lib`), so its bundled chunk runs alone in a worker.
 */
import { isMainThread, parentPort, workerData } from 'node:worker_threads';
import { Jimp, JimpMime } from 'jimp';

/** URL of this module (in the built app: its own chunk). */
export const selfUrl = import.meta.url;

/** Marker in workerData that starts the work. */
export const WORKER_MARK = 'glasscrib-thumbnail-worker';

export interface ThumbnailJob {
	mark: typeof WORKER_MARK;
	bytes: Uint8Array;
	maxPx: number;
	/** jpeg-js refuses more pixels than this before it allocates them (a second net behind the header check). */
	maxMegapixels: number;
}

export type ThumbnailReply =
	| { ok: true; png: Uint8Array; width: number; height: number; sourceWidth: number; sourceHeight: number }
	| { ok: false; message: string };

async function run(job: ThumbnailJob): Promise<ThumbnailReply> {
	let img;
	try {
		img = await Jimp.read(Buffer.from(job.bytes.buffer, job.bytes.byteOffset, job.bytes.byteLength), {
			'image/jpeg': { maxResolutionInMP: job.maxMegapixels, maxMemoryUsageInMB: 512 }
		});
	} catch (err) {
		return { ok: false, message: (err as Error).message };
	}
	const sourceWidth = img.width;
	const sourceHeight = img.height;
	if (sourceWidth > job.maxPx || sourceHeight > job.maxPx) img.scaleToFit({ w: job.maxPx, h: job.maxPx });
	const png = await img.getBuffer(JimpMime.png);
	return { ok: true, png: new Uint8Array(png), width: img.width, height: img.height, sourceWidth, sourceHeight };
}

if (!isMainThread && parentPort && (workerData as ThumbnailJob | undefined)?.mark === WORKER_MARK) {
	const port = parentPort;
	run(workerData as ThumbnailJob).then(
		(reply) => port.postMessage(reply, reply.ok ? [reply.png.buffer as ArrayBuffer] : []),
		(err) => port.postMessage({ ok: false, message: String((err as Error)?.message ?? err) } satisfies ThumbnailReply)
	);
}
