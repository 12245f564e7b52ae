/** Thumbnails of part photos, made with jimp (pure JS; no native image library). */
import { Jimp, JimpMime } from 'jimp';

/** Longest side of a thumbnail, px. */
export const THUMBNAIL_MAX_PX = 320;

export interface Thumbnail {
	png: Buffer;
	width: number;
	height: number;
	/** Size of the original image, px. */
	sourceWidth: number;
	sourceHeight: number;
}

/**
 * A PNG no larger than `maxPx` on either side, keeping the aspect ratio; small images are not enlarged.
 * Returns null when jimp cannot decode the bytes (a damaged or disguised image).
 */
export async function makeThumbnail(bytes: Uint8Array, maxPx = THUMBNAIL_MAX_PX): Promise<Thumbnail | null> {
	let img;
	try {
		img = await Jimp.read(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength));
	} catch {
		return null;
	}
	const sourceWidth = img.width;
	const sourceHeight = img.height;
	if (sourceWidth > maxPx || sourceHeight > maxPx) img.scaleToFit({ w: maxPx, h: maxPx });
	const png = await img.getBuffer(JimpMime.png);
	return { png, width: img.width, height: img.height, sourceWidth, sourceHeight };
}
