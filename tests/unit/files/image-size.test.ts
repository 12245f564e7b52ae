import { describe, expect, it } from 'vitest';
import { Jimp, JimpMime } from 'jimp';
import { imageSize, MAX_IMAGE_PIXELS } from '$lib/server/files/image-size';
import { makeThumbnail } from '$lib/server/files/thumbnails';
import { greyPng } from '../../support/png';

describe('image size from the header, before decoding', () => {
	it('reads a PNG’s IHDR and a JPEG’s frame header, also after large application segments', async () => {
		const img = new Jimp({ width: 123, height: 45, color: 0x336699ff });
		const png = new Uint8Array(await img.getBuffer(JimpMime.png));
		expect(imageSize(png, 'image/png')).toEqual({ width: 123, height: 45 });
		const jpeg = new Uint8Array(await img.getBuffer(JimpMime.jpeg));
		expect(imageSize(jpeg, 'image/jpeg')).toEqual({ width: 123, height: 45 });
		// An APP1 segment of 60,000 bytes (as EXIF with an embedded preview) before the frame header.
		const app1 = new Uint8Array(4 + 59_998);
		app1.set([0xff, 0xe1, (60_000 >> 8) & 0xff, 60_000 & 0xff]);
		const padded = new Uint8Array(jpeg.length + app1.length);
		padded.set(jpeg.subarray(0, 2));
		padded.set(app1, 2);
		padded.set(jpeg.subarray(2), 2 + app1.length);
		expect(imageSize(padded, 'image/jpeg')).toEqual({ width: 123, height: 45 });
	});

	it('says null for damaged headers (no frame before the scan, cut short, zero width)', () => {
		expect(imageSize(new Uint8Array([0xff, 0xd8, 0xff, 0xda, 0, 2]), 'image/jpeg')).toBeNull();
		expect(imageSize(new Uint8Array([0xff, 0xd8, 0xff, 0xe0, 0]), 'image/jpeg')).toBeNull();
		expect(imageSize(new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), 'image/png')).toBeNull();
		const zero = new Uint8Array(24);
		zero.set([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52]);
		expect(imageSize(zero, 'image/png')).toBeNull();
	});

	it('sees a 20000 × 20000 bomb of a few hundred KB for what it is', async () => {
		const bomb = await greyPng(20000, 20000);
		expect(bomb.byteLength).toBeLessThan(1024 * 1024);
		const size = imageSize(bomb, 'image/png')!;
		expect(size).toEqual({ width: 20000, height: 20000 });
		expect(size.width * size.height).toBeGreaterThan(MAX_IMAGE_PIXELS);
	}, 60_000);
});

// The first one bundles the worker with esbuild (under vitest): seconds on a busy machine.
describe('thumbnails in a worker thread', { timeout: 60_000 }, () => {
	it('makes the thumbnail of a hand-made PNG and keeps the caller’s bytes', async () => {
		const png = await greyPng(1000, 400);
		const before = png.byteLength;
		const t = await makeThumbnail(png);
		expect(png.byteLength).toBe(before); // not handed over (detached) to the worker
		expect(t).toMatchObject({ width: 320, height: 128, sourceWidth: 1000, sourceHeight: 400 });
		expect((await Jimp.read(t!.png)).width).toBe(320);
	});

	it('gives up on a photo that takes longer than its time limit, and the next photo still works', async () => {
		const big = await greyPng(4000, 4000);
		await expect(makeThumbnail(big, 320, { timeoutMs: 50 })).rejects.toMatchObject({ reason: 'timeout' });
		expect(await makeThumbnail(await greyPng(50, 50))).toMatchObject({ width: 50, height: 50 });
	});
});
