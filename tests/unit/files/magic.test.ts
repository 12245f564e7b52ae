import { describe, expect, it } from 'vitest';
import { Jimp, JimpMime } from 'jimp';
import { sniffType } from '$lib/server/files/magic';
import fs from 'node:fs';
import os from 'node:os';
import { createHash } from 'node:crypto';
import { checkUpload, cleanFilename, skuCandidates, spoolDatasheet } from '$lib/server/files/datasheets';
import { makeThumbnail } from '$lib/server/files/thumbnails';

const enc = (s: string) => new TextEncoder().encode(s);

describe('file type by magic bytes', () => {
	it('recognises PDF, PNG, JPEG and WebP by their signatures', async () => {
		const img = new Jimp({ width: 4, height: 4, color: 0xff0000ff });
		expect(sniffType(enc('%PDF-1.4\n%âãÏÓ'))).toBe('application/pdf');
		expect(sniffType(new Uint8Array(await img.getBuffer(JimpMime.png)))).toBe('image/png');
		expect(sniffType(new Uint8Array(await img.getBuffer(JimpMime.jpeg)))).toBe('image/jpeg');
		expect(sniffType(new Uint8Array([...enc('RIFF'), 0, 0, 0, 0, ...enc('WEBPVP8 ')]))).toBe('image/webp');
	});

	it('refuses HTML named .pdf, SVG, GIF and empty files whatever their name', () => {
		expect(() => checkUpload(enc('<!DOCTYPE html><script>alert(1)</script>'))).toThrow(/HTML page/);
		expect(() => checkUpload(enc('<svg xmlns="http://www.w3.org/2000/svg"><script/></svg>'))).toThrow(/SVG/);
		expect(() => checkUpload(enc('<?xml version="1.0"?><svg></svg>'))).toThrow(/SVG/);
		expect(() => checkUpload(enc('GIF89a....'))).toThrow(/GIF/);
		expect(() => checkUpload(new Uint8Array())).toThrow(/empty/);
		expect(() => checkUpload(new Uint8Array([...enc('RIFF'), 0, 0, 0, 0, ...enc('WEBPVP8 ')]))).toThrow(/WebP/);
	});

	it('refuses a PDF over 25 MB with 413', () => {
		const big = new Uint8Array(25 * 1024 * 1024 + 1);
		big.set(enc('%PDF-1.7'));
		try {
			checkUpload(big);
			throw new Error('accepted');
		} catch (err) {
			expect((err as { status: number }).status).toBe(413);
			expect((err as Error).message).toMatch(/at most 25 MB/);
		}
	});
});

describe('uploads taken as a stream (spoolDatasheet)', () => {
	const uploadDirs = () => fs.readdirSync(os.tmpdir()).filter((n) => n.startsWith('glasscrib-upload-')).sort();
	const pieces = (bytes: Uint8Array, size: number) =>
		(async function* () {
			for (let i = 0; i < bytes.byteLength; i += size) yield bytes.subarray(i, i + size);
		})();

	it('keeps the bytes and their SHA-256 and reads the type from the first bytes, however they are cut', async () => {
		const pdf = new Uint8Array(200_000);
		pdf.set(enc('%PDF-1.7\n'));
		for (let i = 10; i < pdf.length; i++) pdf[i] = (i * 31) & 0xff;
		const got = await spoolDatasheet(pieces(pdf, 3));
		try {
			expect(got.contentType).toBe('application/pdf');
			expect(got.size).toBe(pdf.byteLength);
			expect(got.sha256).toBe(createHash('sha256').update(pdf).digest('hex'));
			expect(fs.readFileSync(got.path).equals(Buffer.from(pdf))).toBe(true);
		} finally {
			await got.remove();
		}
	});

	it('refuses the same files as checkUpload, and a photo over 15 MB as soon as it passes the cap; no temporary file stays', async () => {
		const before = uploadDirs();
		for (const [bytes, message] of [
			[enc('<!DOCTYPE html><script>alert(1)</script>'), /HTML page/],
			[new Uint8Array(), /empty/],
			[new Uint8Array([...enc('RIFF'), 0, 0, 0, 0, ...enc('WEBPVP8 '), 1, 2, 3, 4]), /WebP/]
		] as const) {
			await expect(spoolDatasheet(pieces(bytes, 5))).rejects.toThrow(message);
		}
		let pulled = 0;
		const endlessJpeg = (async function* () {
			const first = new Uint8Array(64 * 1024);
			first.set([0xff, 0xd8, 0xff, 0xe0]);
			pulled += first.byteLength;
			yield first;
			for (;;) {
				const next = new Uint8Array(64 * 1024);
				pulled += next.byteLength;
				yield next;
			}
		})();
		const err = await spoolDatasheet(endlessJpeg).catch((e) => e);
		expect(err.status).toBe(413);
		expect(err.message).toMatch(/photos may be at most 15 MB/);
		expect(pulled).toBeLessThan(15 * 1024 * 1024 + 256 * 1024);
		expect(uploadDirs()).toEqual(before);
	});
});

describe('file names', () => {
	it('keeps only a plain name for display', () => {
		expect(cleanFilename('../../etc/x.pdf')).toBe('x.pdf');
		expect(cleanFilename('C:\\Users\\me\\sheet.pdf')).toBe('sheet.pdf');
		expect(cleanFilename('a\u0000b.pdf')).toBe('ab.pdf');
	});

	it('matches file names to SKUs by stem or prefix before a space, underscore or bracket', () => {
		expect(skuCandidates('PCX-25-050.pdf')).toEqual(['PCX-25-050']);
		expect(skuCandidates('PCX-25-050_datasheet.pdf')).toEqual(['PCX-25-050_datasheet', 'PCX-25-050']);
		expect(skuCandidates('PCX-25-050 (photo).jpg')).toEqual(['PCX-25-050 (photo)', 'PCX-25-050']);
	});
});

// Thumbnails run in a worker thread, bundled with esbuild on first use under vitest: seconds on a busy machine.
describe('thumbnails (jimp, in a worker thread)', { timeout: 60_000 }, () => {
	it('fits a landscape photo into 320 px keeping the aspect ratio', async () => {
		const img = new Jimp({ width: 1200, height: 800, color: 0x3366ccff });
		const t = await makeThumbnail(new Uint8Array(await img.getBuffer(JimpMime.jpeg)));
		expect(t).not.toBeNull();
		expect([t!.width, t!.height]).toEqual([320, 213]);
		expect([t!.sourceWidth, t!.sourceHeight]).toEqual([1200, 800]);
		const back = await Jimp.read(t!.png);
		expect([back.width, back.height]).toEqual([320, 213]);
	});

	it('does not enlarge a small image and returns null for bytes that are not an image', async () => {
		const img = new Jimp({ width: 100, height: 300, color: 0x000000ff });
		const t = await makeThumbnail(new Uint8Array(await img.getBuffer(JimpMime.png)));
		expect([t!.width, t!.height]).toEqual([100, 300]);
		const broken = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 1, 2, 3]);
		expect(await makeThumbnail(broken)).toBeNull();
	});
});
