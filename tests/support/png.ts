/**
 * PNG files made by hand for the upload tests: 8-bit greyscale, every row the same, deflated as a
 * stream, so that a 20000 × 20000 image bomb (400 MB of pixels) is a few hundred KB and is made
 * without holding its pixels. Layout: ISO/IEC 15948:2004 (PNG), 5.2 signature, 11.2.2 IHDR, 11.2.4 IDAT.
 */
import zlib from 'node:zlib';

function chunk(type: string, data: Buffer): Buffer {
	const head = Buffer.alloc(8);
	head.writeUInt32BE(data.length, 0);
	head.write(type, 4, 'ascii');
	const crc = Buffer.alloc(4);
	crc.writeUInt32BE(zlib.crc32(Buffer.concat([head.subarray(4), data])) >>> 0, 0);
	return Buffer.concat([head, data, crc]);
}

/** A plain grey PNG of width × height pixels (deflate's best case: 20000 × 20000 is about 430 KB). */
export async function greyPng(width: number, height: number): Promise<Uint8Array> {
	const ihdr = Buffer.alloc(13);
	ihdr.writeUInt32BE(width, 0);
	ihdr.writeUInt32BE(height, 4);
	ihdr[8] = 8; // bit depth
	ihdr[9] = 0; // greyscale
	const row = Buffer.alloc(width + 1, 0x80); // filter byte, then the pixels
	row[0] = 0; // filter type None
	const deflate = zlib.createDeflate({ level: 9 });
	const out: Buffer[] = [];
	deflate.on('data', (c: Buffer) => out.push(c));
	const done = new Promise<void>((resolve, reject) => {
		deflate.on('end', resolve);
		deflate.on('error', reject);
	});
	for (let y = 0; y < height; y++) {
		if (!deflate.write(row)) await new Promise((r) => deflate.once('drain', r));
	}
	deflate.end();
	await done;
	const sig = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
	return new Uint8Array(Buffer.concat([sig, chunk('IHDR', ihdr), chunk('IDAT', Buffer.concat(out)), chunk('IEND', Buffer.alloc(0))]));
}
