/**
 * Width and height of a PNG or JPEG read from its header, without decoding a pixel, so that an
 * image bomb (a small file that decodes to a huge bitmap) is refused before anything is decoded.
 * PNG: the IHDR chunk comes first, width and height as 4-byte big-endian integers (ISO/IEC 15948:2004,
 * 11.2.2). JPEG: markers are walked segment by segment to the first SOFn frame header, which holds
 * height then width as 2-byte big-endian integers (ITU-T T.81 (1992), B.2.2 and Table B.1).
 */

/**
 * The most pixels a photo may have: 30 megapixels (6700 × 4470, more than most cameras give; the decoded
 * bitmap is 120 MB). Measured here: jimp's JPEG decoder (jpeg-js) needs about 13 bytes per pixel and
 * refuses past its 512 MB default, which a 40 MP JPEG exceeds.
 */
export const MAX_IMAGE_MEGAPIXELS = 30;
export const MAX_IMAGE_PIXELS = MAX_IMAGE_MEGAPIXELS * 1_000_000;

export interface ImageSize {
	width: number;
	height: number;
}

const u16 = (b: Uint8Array, at: number) => (b[at] << 8) | b[at + 1];
const u32 = (b: Uint8Array, at: number) => ((b[at] << 24) | (b[at + 1] << 16) | (b[at + 2] << 8) | b[at + 3]) >>> 0;

/** SOF0–SOF15 except DHT (C4), JPG (C8) and DAC (CC), which share the range. */
const isStartOfFrame = (m: number) => m >= 0xc0 && m <= 0xcf && m !== 0xc4 && m !== 0xc8 && m !== 0xcc;

function pngSize(b: Uint8Array): ImageSize | null {
	// 8-byte signature, then the IHDR chunk: length (4), type "IHDR" (4), width (4), height (4).
	if (b.length < 24 || b[12] !== 0x49 || b[13] !== 0x48 || b[14] !== 0x44 || b[15] !== 0x52) return null;
	return { width: u32(b, 16), height: u32(b, 20) };
}

function jpegSize(b: Uint8Array): ImageSize | null {
	let i = 2; // after SOI (FF D8)
	while (i < b.length) {
		if (b[i] !== 0xff) return null; // not at a marker: damaged
		while (i < b.length && b[i] === 0xff) i++; // fill bytes
		if (i >= b.length) return null;
		const marker = b[i];
		i++;
		// Markers without a segment: TEM, RSTn, SOI, EOI.
		if (marker === 0x01 || (marker >= 0xd0 && marker <= 0xd8)) continue;
		if (marker === 0xd9 || marker === 0xda) return null; // end of image or scan data before any frame header
		if (i + 2 > b.length) return null;
		const length = u16(b, i);
		if (length < 2) return null;
		if (isStartOfFrame(marker)) {
			if (i + 7 > b.length) return null;
			return { height: u16(b, i + 3), width: u16(b, i + 5) };
		}
		i += length;
	}
	return null;
}

/** The size of a PNG or JPEG from its header, or null when the header cannot be read. */
export function imageSize(bytes: Uint8Array, type: 'image/png' | 'image/jpeg'): ImageSize | null {
	const size = type === 'image/png' ? pngSize(bytes) : jpegSize(bytes);
	return size && size.width > 0 && size.height > 0 ? size : null;
}
