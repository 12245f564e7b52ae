/**
 * CSV reading and writing for imports and exports (papaparse). Files are UTF-8 with or without a
 * byte order mark; the delimiter is a comma, semicolon or tab, found from the header row.
 */
import fs from 'node:fs';
import type { Readable } from 'node:stream';
import Papa from 'papaparse';
import { DomainError } from '$lib/server/errors';
import { spoolToTempFile, type SpooledFile, type SpoolProgress } from '$lib/server/files/spool';

/** Caps on an uploaded CSV. 16 MB holds about 80,000 rows of the export's format (~200 bytes a row). */
export const CSV_MAX_BYTES = 16 * 1024 * 1024;
export const CSV_MAX_ROWS = 100_000;

export type Delimiter = ',' | ';' | '\t';
export const DELIMITER_NAMES: Record<Delimiter, string> = { ',': 'comma', ';': 'semicolon', '\t': 'tab' };

/** Text cells that a spreadsheet could run as a formula get a leading ' on export (SECURITY.md V5). */
const FORMULA_START = /^'*[=+\-@\t\r]/;

/** The cell as the export writes it: a leading ' where a spreadsheet would read a formula. */
export function escapeFormula(text: string): string {
	return FORMULA_START.test(text) ? `'${text}` : text;
}

/** Undoes `escapeFormula` (only for cells that it would have escaped), so a round trip is exact. */
export function unescapeFormula(text: string): string {
	return text.startsWith("'") && FORMULA_START.test(text.slice(1)) ? text.slice(1) : text;
}

/** Counts delimiters outside quotes in the first line. */
export function detectDelimiter(text: string): Delimiter {
	const counts: Record<Delimiter, number> = { ',': 0, ';': 0, '\t': 0 };
	let quoted = false;
	for (let i = 0; i < text.length; i++) {
		const c = text[i];
		if (c === '"') quoted = !quoted;
		else if (!quoted && (c === '\n' || c === '\r')) break;
		else if (!quoted && (c === ',' || c === ';' || c === '\t')) counts[c]++;
	}
	const best = (Object.keys(counts) as Delimiter[]).sort((a, b) => counts[b] - counts[a])[0];
	return counts[best] > 0 ? best : ',';
}

export interface CheckedCsv {
	delimiter: Delimiter;
	header: string[];
	/** The first data rows, for the mapping screen. */
	preview: string[][];
	rowCount: number;
}

const BINARY_SIGNATURES: [number[], string][] = [
	[[0x25, 0x50, 0x44, 0x46], 'a PDF document'],
	[[0x50, 0x4b, 0x03, 0x04], 'a ZIP archive or a spreadsheet workbook (save it as CSV first)'],
	[[0xd0, 0xcf, 0x11, 0xe0], 'an old-style office document (save it as CSV first)'],
	[[0x89, 0x50, 0x4e, 0x47], 'a PNG image'],
	[[0xff, 0xd8, 0xff], 'a JPEG image']
];

/**
 * The byte-level checks of an uploaded CSV, made as it streams in (`push` each chunk, then `end`
 * with what the spool saw): size, not empty, not a known binary format, no NUL bytes near the
 * start, valid UTF-8. Throws DomainError (400, or 413 for size, as soon as the limit is passed) with a
 * message for people. The other refusals wait for `end`, so that each file gets the same message
 * whatever its chunks.
 */
export class CsvByteCheck {
	private readonly decoder = new TextDecoder('utf-8', { fatal: true });
	private utf8 = true;
	private blank = true;

	constructor(private readonly maxBytes = CSV_MAX_BYTES) {}

	push(chunk: Uint8Array, so: SpoolProgress): void {
		if (so.size > this.maxBytes) {
			throw new DomainError(413, 'too-large', `The file is more than ${Math.round(this.maxBytes / (1024 * 1024))} MB; a CSV may be at most ${Math.round(this.maxBytes / (1024 * 1024))} MB. Split it into smaller files.`, {
				file: 'The file is too large.'
			});
		}
		if (!this.utf8) return;
		try {
			const text = this.decoder.decode(chunk, { stream: true });
			if (this.blank && text.replace(/\uFEFF/g, '').trim() !== '') this.blank = false;
		} catch {
			this.utf8 = false;
		}
	}

	/** `head`: the first 8 KB of the file (NUL bytes there mean binary data). */
	end(so: Pick<SpoolProgress, 'size' | 'head'>): void {
		if (so.size === 0) throw new DomainError(400, 'empty-file', 'The file is empty.', { file: 'The file is empty.' });
		const head = so.head;
		for (const [sig, what] of BINARY_SIGNATURES) {
			if (head.byteLength >= sig.length && sig.every((b, i) => head[i] === b)) {
				throw new DomainError(400, 'not-csv', `This is ${what}, not a CSV file.`, { file: `This is ${what}, not a CSV file.` });
			}
		}
		if (head.includes(0)) {
			throw new DomainError(400, 'not-csv', 'This is not a text file (it contains binary data). Upload a CSV file.', { file: 'This is not a CSV file.' });
		}
		if (this.utf8) {
			try {
				this.decoder.decode(); // a multibyte character cut off at the end
			} catch {
				this.utf8 = false;
			}
		}
		if (!this.utf8) {
			throw new DomainError(400, 'not-utf8', 'The file is not UTF-8 text. Save it from your spreadsheet as "CSV UTF-8".', { file: 'Save the file as CSV UTF-8.' });
		}
		if (this.blank) throw new DomainError(400, 'empty-file', 'The file is empty.', { file: 'The file is empty.' });
	}
}

/**
 * The structure of a CSV file that passed `CsvByteCheck`, read as a stream (memory stays flat): the
 * delimiter from the first line, a header row with distinct names, at least one and at most
 * `maxRows` data rows, the first five of them for the mapping screen.
 */
export async function inspectCsvFile(file: string, opts: { maxRows?: number } = {}): Promise<CheckedCsv> {
	const maxRows = opts.maxRows ?? CSV_MAX_ROWS;
	const start = Buffer.alloc(64 * 1024);
	const fh = await fs.promises.open(file, 'r');
	let startText: string;
	try {
		const { bytesRead } = await fh.read(start, 0, start.byteLength, 0);
		startText = new TextDecoder('utf-8').decode(start.subarray(0, bytesRead));
	} finally {
		await fh.close();
	}
	if (startText.charCodeAt(0) === 0xfeff) startText = startText.slice(1);
	const delimiter = detectDelimiter(startText);
	let header: string[] | null = null;
	const preview: string[][] = [];
	let rowCount = 0;
	for await (const record of csvRecords(fs.createReadStream(file), delimiter)) {
		if (!header) {
			header = record.map((c) => c.trim());
			continue;
		}
		rowCount++;
		if (preview.length < 5) preview.push(record);
		if (rowCount > maxRows) {
			throw new DomainError(400, 'too-many-rows', `The file has more than ${maxRows.toLocaleString('en')} rows. Split it into smaller files.`, { file: 'Too many rows.' });
		}
	}
	const h = header as string[] | null;
	if (!h || h.every((c) => c === '')) throw new DomainError(400, 'no-header', 'The file has no header row.', { file: 'No header row.' });
	if (rowCount === 0) {
		throw new DomainError(400, 'header-only', 'The file has a header row but no data rows.', { file: 'The file has a header row but no data rows.' });
	}
	const seen = new Set<string>();
	h.forEach((c, i) => {
		if (c === '') throw new DomainError(400, 'blank-header', `Column ${i + 1} of the header row has no name.`, { file: `Column ${i + 1} has no name.` });
		if (seen.has(c)) throw new DomainError(400, 'duplicate-header', `Two columns of the header row are named "${c}".`, { file: `Two columns are named "${c}".` });
		seen.add(c);
	});
	return { delimiter, header: h, preview, rowCount };
}

/** A checked upload in a temporary file: where it is, its size and hash, and its structure. */
export type SpooledCsv = SpooledFile & CheckedCsv;

/**
 * Takes an uploaded CSV as it streams in: the byte checks on the way to a temporary file, then the
 * structure from that file. Throws DomainError for a refused file, and leaves no file behind then;
 * otherwise the caller removes the file (`remove`) when done.
 */
export async function spoolCsv(source: AsyncIterable<Uint8Array> | Uint8Array, opts: { maxBytes?: number; maxRows?: number } = {}): Promise<SpooledCsv> {
	const check = new CsvByteCheck(opts.maxBytes);
	const file = await spoolToTempFile(source, (chunk, so) => check.push(chunk, so)); // the head: its first 8 KB
	try {
		check.end(file);
		return { ...file, ...(await inspectCsvFile(file.path, opts)) };
	} catch (err) {
		await file.remove();
		throw err;
	}
}

/**
 * Streams the records of a stored CSV (header first) as string arrays; memory stays flat whatever
 * the file size. `source` is a byte stream (S3 body or file).
 *
 * papaparse's chunk mode: it parses each piece of text the stream delivers (typically 16–64 KB)
 * in one go and hands over its rows; the parser and the stream are paused until the consumer has
 * taken them, so at most a piece or two is held. (Its Node duplex stream, used before, pauses
 * every 16 rows and then parses the rest of the piece again from that point: a quadratic cost
 * that made it the largest item of the import profile.)
 */
export async function* csvRecords(source: Readable, delimiter: Delimiter): AsyncGenerator<string[]> {
	source.setEncoding('utf8'); // decodes multibyte characters split across chunks (STACK.md)
	const pieces: string[][][] = [];
	// Set from papaparse's callbacks (an object, so the checks below are not narrowed away).
	const state: { paused: Papa.Parser | null; finished: boolean; failure: unknown; wake: (() => void) | null } = { paused: null, finished: false, failure: null, wake: null };
	const signal = () => {
		const wake = state.wake;
		state.wake = null;
		wake?.();
	};
	source.on('error', (err) => {
		state.failure ??= err;
		signal();
	});
	Papa.parse(source as unknown as Papa.LocalFile, {
		delimiter,
		skipEmptyLines: 'greedy',
		chunk: (results: Papa.ParseResult<string[]>, parser: Papa.Parser) => {
			pieces.push(results.data);
			parser.pause();
			source.pause();
			state.paused = parser;
			signal();
		},
		complete: () => {
			state.finished = true;
			signal();
		},
		error: (err: Error) => {
			state.failure ??= err;
			signal();
		}
	});
	let first = true;
	try {
		for (;;) {
			const piece = pieces.shift();
			if (piece) {
				for (const record of piece) {
					if (first) {
						first = false;
						if (record.length && record[0].charCodeAt(0) === 0xfeff) record[0] = record[0].slice(1);
					}
					yield record;
				}
				const parser = state.paused;
				state.paused = null;
				if (parser) {
					source.resume();
					parser.resume();
				}
				continue;
			}
			if (state.failure) throw state.failure;
			if (state.finished) return;
			await new Promise<void>((resolve) => (state.wake = resolve));
		}
	} finally {
		// The consumer stopped early (a failed batch): let go of the stream.
		if (!state.finished) source.destroy();
	}
}

/** One CSV line (with CRLF) from cells; quotes where needed. */
export function csvLine(cells: readonly (string | number | null | undefined)[], delimiter: Delimiter = ','): string {
	return (
		cells
			.map((c) => {
				if (c === null || c === undefined) return '';
				const s = typeof c === 'number' ? String(c) : c;
				return /["\r\n]/.test(s) || s.includes(delimiter) || /^\s|\s$/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
			})
			.join(delimiter) + '\r\n'
	);
}
