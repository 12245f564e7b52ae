import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import { Readable } from 'node:stream';
import Papa from 'papaparse';
import { csvLine, csvRecords, detectDelimiter, escapeFormula, spoolCsv, unescapeFormula } from '$lib/server/imports/csv';
import { DomainError } from '$lib/server/errors';

const enc = (s: string) => new TextEncoder().encode(s);
/** Checks a file given whole and given as a stream of `chunk`-byte pieces; both must agree. */
async function check(bytes: Uint8Array, opts: { maxRows?: number; maxBytes?: number } = {}, chunk = 3) {
	const pieces = async function* () {
		for (let i = 0; i < bytes.byteLength; i += chunk) yield bytes.subarray(i, i + chunk);
	};
	const whole = await spoolCsv(bytes, opts).then(
		async (c) => (await c.remove(), { ok: c }),
		(err) => ({ err })
	);
	const streamed = await spoolCsv(pieces(), opts).then(
		async (c) => (await c.remove(), { ok: c }),
		(err) => ({ err })
	);
	if ('err' in whole || 'err' in streamed) {
		expect('err' in whole && 'err' in streamed).toBe(true);
		expect((streamed as { err: Error }).err.message).toBe((whole as { err: Error }).err.message);
		throw (whole as { err: Error }).err;
	}
	expect({ ...streamed.ok, path: '', remove: null }).toEqual({ ...whole.ok, path: '', remove: null });
	return whole.ok;
}
const refused = async (bytes: Uint8Array, opts: { maxRows?: number; maxBytes?: number } = {}) => {
	const err = await check(bytes, opts).then(
		() => null,
		(e) => e
	);
	if (!err) throw new Error('the file was accepted');
	expect(err).toBeInstanceOf(DomainError);
	return err as DomainError;
};
const uploadDirs = () => fs.readdirSync(os.tmpdir()).filter((n) => n.startsWith('glasscrib-upload-')).sort();

describe('spoolCsv: checks of an uploaded CSV as it streams in', () => {
	it('reads comma, semicolon and tab files, with or without BOM, with quoted fields', async () => {
		const a = await check(enc('sku,name\nA-1,"Lens, 25 mm ""best"""\n'));
		expect(a.delimiter).toBe(',');
		expect(a.header).toEqual(['sku', 'name']);
		expect(a.preview[0]).toEqual(['A-1', 'Lens, 25 mm "best"']);
		const b = await check(enc('\uFEFFsku;name\r\nA-1;"x;y"\r\n'));
		expect(b.delimiter).toBe(';');
		expect(b.header).toEqual(['sku', 'name']);
		expect(b.preview[0]).toEqual(['A-1', 'x;y']);
		const c = await check(enc('sku\tname\nA-1\tLens\nA-2\tLens 2\n'));
		expect(c.delimiter).toBe('\t');
		expect(c.rowCount).toBe(2);
	});

	it('keeps the bytes, their size and SHA-256, and multibyte characters cut between chunks', async () => {
		const text = 'sku,name\nÅ-1,Linse für 25 µm – “gut”\n';
		const bytes = enc(text);
		const c = await spoolCsv(
			(async function* () {
				for (let i = 0; i < bytes.byteLength; i += 1) yield bytes.subarray(i, i + 1);
			})()
		);
		try {
			expect(c.size).toBe(bytes.byteLength);
			expect(fs.readFileSync(c.path).equals(Buffer.from(bytes))).toBe(true);
			// SHA-256 of the same bytes by node:crypto in one piece (FIPS 180-4 defines the function).
			const { createHash } = await import('node:crypto');
			expect(c.sha256).toBe(createHash('sha256').update(bytes).digest('hex'));
			expect(c.preview[0]).toEqual(['Å-1', 'Linse für 25 µm – “gut”']);
		} finally {
			await c.remove();
		}
		expect(fs.existsSync(c.path)).toBe(false);
	});

	it('refuses an empty file, a header-only file, binary and non-UTF-8 files with a clear message', async () => {
		expect((await refused(new Uint8Array())).message).toBe('The file is empty.');
		expect((await refused(enc('  \n\n'))).message).toBe('The file is empty.');
		expect((await refused(enc('sku,name\n'))).message).toBe('The file has a header row but no data rows.');
		expect((await refused(enc('%PDF-1.7\n...'))).message).toMatch(/PDF document, not a CSV/);
		expect((await refused(new Uint8Array([0x50, 0x4b, 0x03, 0x04, 1, 2]))).message).toMatch(/spreadsheet workbook/);
		expect((await refused(new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a]))).message).toMatch(/PNG image/);
		expect((await refused(new Uint8Array([0x61, 0x00, 0x62]))).message).toMatch(/not a text file/);
		expect((await refused(new Uint8Array([0x73, 0x6b, 0x75, 0x0a, 0xe9, 0x0a]))).message).toMatch(/not UTF-8/); // latin-1 é
		expect((await refused(new Uint8Array([0x73, 0x6b, 0x75, 0x0a, 0x31, 0xc3]))).message).toMatch(/not UTF-8/); // cut off in a 2-byte character
		expect((await refused(enc('sku,sku\n1,2\n'))).message).toMatch(/Two columns of the header row are named "sku"/);
	});

	it('finds a bad byte far into the file, after many good chunks', async () => {
		const good = enc('sku,name\n' + 'A-1,Lens\n'.repeat(20_000));
		const bytes = new Uint8Array(good.byteLength + 8);
		bytes.set(good);
		bytes.set(enc('A-2,L'), good.byteLength);
		bytes.set([0xff, 0x0a, 0x0a], good.byteLength + 5);
		const err = await spoolCsv(Readable.from([bytes.subarray(0, 70_000), bytes.subarray(70_000)])).catch((e) => e);
		expect(err).toBeInstanceOf(DomainError);
		expect(err.message).toMatch(/not UTF-8/);
	});

	it('refuses a file over the size limit with 413 as soon as the limit is passed, and too many rows with 400; no temporary file stays', async () => {
		const before = uploadDirs();
		let pulled = 0;
		const endless = (async function* () {
			const piece = enc('a,b\n'.repeat(16 * 1024));
			for (;;) {
				pulled += piece.byteLength;
				yield piece;
			}
		})();
		const err = await spoolCsv(endless, { maxBytes: 1024 * 1024 }).catch((e) => e);
		expect(err).toBeInstanceOf(DomainError);
		expect(err.status).toBe(413);
		expect(err.message).toMatch(/at most 1 MB/);
		expect(pulled).toBeLessThan(1024 * 1024 + 128 * 1024);
		expect((await refused(enc('sku\n1\n2\n3\n'), { maxRows: 2 })).message).toMatch(/more than 2 rows/);
		expect(uploadDirs()).toEqual(before);
	});
});

describe('formula escaping (SECURITY.md V5)', () => {
	it('prefixes cells a spreadsheet would run and strips the prefix back exactly', () => {
		for (const s of ['=HYPERLINK("x")', '+1', '-2', '@SUM(A1)', '\tx', '\rx', "'=x", "''+y", 'plain', "it's", "'quoted'", '']) {
			expect(unescapeFormula(escapeFormula(s))).toBe(s);
		}
		expect(escapeFormula('=HYPERLINK("x")')).toBe('\'=HYPERLINK("x")');
		expect(escapeFormula('plain')).toBe('plain');
		expect(unescapeFormula("'plain")).toBe("'plain");
	});
});

describe('delimiter detection and streaming', () => {
	it('ignores delimiters inside quotes', () => {
		expect(detectDelimiter('"a,b,c";"d"\n1;2')).toBe(';');
	});

	it('streams records and keeps multibyte characters split across chunks', async () => {
		const text = '\uFEFFsku,name\n' + Array.from({ length: 3000 }, (_, i) => `S-${i},Linse µ ${i} “ø”`).join('\n');
		const bytes = Buffer.from(text, 'utf8');
		// 7-byte chunks cut characters in half.
		const chunks: Buffer[] = [];
		for (let i = 0; i < bytes.length; i += 7) chunks.push(bytes.subarray(i, i + 7));
		const rows: string[][] = [];
		for await (const r of csvRecords(Readable.from(chunks), ',')) rows.push(r);
		expect(rows[0]).toEqual(['sku', 'name']);
		expect(rows).toHaveLength(3001);
		expect(rows[2999]).toEqual(['S-2998', 'Linse µ 2998 “ø”']);
	});

	it('gives the same records as parsing the whole text, whatever the chunk size', async () => {
		// Quoted delimiters, quotes, CRLF and LF inside quotes, blank lines, a last row without a newline.
		const text =
			'sku;name;notes\r\n' +
			Array.from({ length: 400 }, (_, i) => `Q-${i};"Lens; ${i} ""x""";"line 1\r\nline 2\nline 3 ${i}"\r\n${i % 50 === 0 ? '\r\n' : ''}`).join('') +
			'Q-last;end;"no newline after this"';
		const whole = Papa.parse<string[]>(text, { delimiter: ';', skipEmptyLines: 'greedy' }).data;
		expect(whole).toHaveLength(402);
		const bytes = Buffer.from(text, 'utf8');
		// From 17 bytes on: papaparse guesses the line break from the first piece, which must then hold the
		// header's CRLF (S3 and file streams deliver 16 KB and more; the duplex stream used before did the same).
		for (const size of [17, 64, 1000, 65536]) {
			const chunks: Buffer[] = [];
			for (let i = 0; i < bytes.length; i += size) chunks.push(bytes.subarray(i, i + size));
			const rows: string[][] = [];
			for await (const r of csvRecords(Readable.from(chunks), ';')) rows.push(r);
			expect(rows, `chunks of ${size} bytes`).toEqual(whole);
		}
	});

	it('reads the stream only as fast as the records are taken', async () => {
		let pulled = 0;
		const rowsPerChunk = 50;
		const chunks = 1000;
		async function* source() {
			yield 'sku,name\n';
			for (let c = 0; c < chunks; c++) {
				pulled++;
				yield Array.from({ length: rowsPerChunk }, (_, i) => `S-${c}-${i},Lens\n`).join('');
			}
		}
		let taken = 0;
		let misread = 0;
		for await (const r of csvRecords(Readable.from(source(), { objectMode: false }), ',')) {
			if (r.length !== 2) misread++;
			taken++;
			if (taken === 2000) {
				await new Promise((resolve) => setTimeout(resolve, 20));
				// 2000 records are 40 chunks; a few more may wait in the stream's buffer, not the whole file.
				expect(pulled).toBeGreaterThanOrEqual(40);
				expect(pulled).toBeLessThan(60);
			}
		}
		expect(taken).toBe(1 + rowsPerChunk * chunks);
		expect(misread).toBe(0);
		expect(pulled).toBe(chunks);
	});

	it('passes on an error of the stream', async () => {
		async function* source() {
			yield 'sku,name\nA,1\n';
			throw new Error('connection reset');
		}
		const rows: string[][] = [];
		await expect(
			(async () => {
				for await (const r of csvRecords(Readable.from(source(), { objectMode: false }), ',')) rows.push(r);
			})()
		).rejects.toThrow('connection reset');
	});

	it('writes lines that quote delimiters, quotes and newlines', () => {
		expect(csvLine(['a', 'b,c', 'd"e', 'f\ng', 1.5, null])).toBe('a,"b,c","d""e","f\ng",1.5,\r\n');
	});
});
