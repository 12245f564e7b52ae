/**
 * Stock take: count what is in the drawers and correct the books (issue 16). A count is a list of lines
 * (location code, SKU, condition, counted units), from a CSV (`POST /api/v1/stock-takes`, the
 * /stock-take page) or from counting one drawer on a phone (/stock-take/[location=id]).
 *
 * - A dry run answers, per line, the booked units (the stock table), the counted units and the difference.
 * - A commit writes one `adjust` movement per line with a difference (reason "stock take", the count's
 *   date in the note), all in one transaction: every part named is locked first (in id order, as every
 *   stock operation locks), the booked figures are read again under the locks, and any refused line
 *   (unknown SKU, archived part, …) leaves nothing written.
 * Lines not in the count are not touched: a drawer count lists what is booked there, so a part that is
 * gone is counted as 0, not left out.
 */
import { and, eq, inArray, isNull } from 'drizzle-orm';
import { z } from 'zod';
import { text } from '$lib/input';
import type { DbOrTx } from '$lib/server/db';
import { inTransaction } from '$lib/server/db/transaction';
import { CONDITIONS, locations, parts, stock, type Condition } from '$lib/server/db/schema';
import { DomainError, InvalidInput } from '$lib/server/errors';
import { formatDate } from '$lib/format';
import * as ops from './operations';

export const STOCK_TAKE_REASON = 'stock take';
export const STOCK_TAKE_COLUMNS = ['locationCode', 'sku', 'condition', 'quantity'] as const;
/** Lines one count may have (a stockroom of a few thousand drawers' lines; more: split the file). */
export const MAX_LINES = 5000;

const lineSchema = z
	.object({
		locationCode: text().trim().min(1, 'Give the location code.').max(40),
		sku: text().trim().min(1, 'Give the SKU.').max(40),
		condition: z.preprocess((v) => (typeof v === 'string' && v.trim() === '' ? 'usable' : typeof v === 'string' ? v.trim().toLowerCase() : v), z.enum(CONDITIONS, { error: 'usable, quarantine or damaged.' })),
		quantity: z.preprocess(
			(v) => (typeof v === 'string' ? (v.trim() === '' ? Number.NaN : Number(v.trim())) : v),
			z.number({ error: 'Give the counted units (0 when none are there).' }).int('Whole units only.').min(0, 'A count cannot be negative.').max(100_000)
		)
	})
	.strict();
export type CountLine = z.input<typeof lineSchema>;

export interface LineError {
	/** CSV row (header = 1) or list position + 1. */
	row: number;
	column: string;
	value: string;
	message: string;
}

export interface TakeLine {
	row: number;
	locationId: number;
	locationCode: string;
	partId: number;
	sku: string;
	name: string;
	condition: Condition;
	booked: number;
	counted: number;
	difference: number;
}

export interface TakeResult {
	dryRun: boolean;
	countedOn: string;
	lines: TakeLine[];
	totals: { lines: number; differences: number; unitsFound: number; unitsMissing: number };
	/** Movement ids written by a commit (empty for a dry run). */
	movements: number[];
}

export class StockTakeRefused extends InvalidInput {
	constructor(readonly lines: LineError[]) {
		super(
			`${lines.length} line${lines.length === 1 ? ' was' : 's were'} refused: nothing was written. The first: row ${lines[0].row}, ${lines[0].column}: ${lines[0].message}`,
			{ file: 'Some lines were refused.' },
			'invalid-lines'
		);
	}
}

/** Checks the lines and resolves codes to ids; throws StockTakeRefused listing every bad line. */
async function resolve(db: DbOrTx, input: readonly CountLine[], rowOf: (i: number) => number) {
	if (input.length === 0) throw new DomainError(400, 'no-lines', 'The count has no lines.', { file: 'No lines.' });
	if (input.length > MAX_LINES) throw new DomainError(400, 'too-many-lines', `At most ${MAX_LINES} lines in one count.`, { file: 'Too many lines.' });
	const errors: LineError[] = [];
	const ok: { row: number; line: z.output<typeof lineSchema> }[] = [];
	input.forEach((raw, i) => {
		const r = lineSchema.safeParse(raw);
		if (r.success) ok.push({ row: rowOf(i), line: r.data });
		else for (const issue of r.error.issues) errors.push({ row: rowOf(i), column: String(issue.path[0] ?? ''), value: String((raw as Record<string, unknown>)[String(issue.path[0])] ?? ''), message: issue.message });
	});
	const codes = [...new Set(ok.map((o) => o.line.locationCode))];
	const skus = [...new Set(ok.map((o) => o.line.sku))];
	const locs = codes.length ? await db.select().from(locations).where(inArray(locations.code, codes)) : [];
	const ps = skus.length ? await db.select({ id: parts.id, sku: parts.sku, name: parts.name, archivedAt: parts.archivedAt }).from(parts).where(inArray(parts.sku, skus)) : [];
	const locBy = new Map(locs.map((l) => [l.code.toLowerCase(), l]));
	const partBy = new Map(ps.map((p) => [p.sku.toLowerCase(), p]));
	const seen = new Map<string, number>();
	const lines: Omit<TakeLine, 'booked' | 'difference'>[] = [];
	for (const { row, line } of ok) {
		const loc = locBy.get(line.locationCode.toLowerCase());
		const part = partBy.get(line.sku.toLowerCase());
		if (!loc) errors.push({ row, column: 'locationCode', value: line.locationCode, message: 'No such location.' });
		else if (loc.archivedAt) errors.push({ row, column: 'locationCode', value: line.locationCode, message: 'This location is archived.' });
		if (!part) errors.push({ row, column: 'sku', value: line.sku, message: 'No part has this SKU.' });
		else if (part.archivedAt) errors.push({ row, column: 'sku', value: line.sku, message: 'This part is archived: restore it before counting it in.' });
		if (!loc || !part || loc.archivedAt || part.archivedAt) continue;
		const key = `${loc.id}/${part.id}/${line.condition}`;
		if (seen.has(key)) {
			errors.push({ row, column: 'sku', value: line.sku, message: `Row ${seen.get(key)} counts the same part, place and condition: give each once.` });
			continue;
		}
		seen.set(key, row);
		lines.push({ row, locationId: loc.id, locationCode: loc.code, partId: part.id, sku: part.sku, name: part.name, condition: line.condition, counted: line.quantity });
	}
	if (errors.length) throw new StockTakeRefused(errors.sort((a, b) => a.row - b.row));
	return lines;
}

/** Booked units per (location, part, condition) of the given parts. */
async function booked(db: DbOrTx, partIds: number[]) {
	const rows = partIds.length ? await db.select().from(stock).where(inArray(stock.partId, partIds)) : [];
	return new Map(rows.map((s) => [`${s.locationId}/${s.partId}/${s.condition}`, s.quantity]));
}

function summarise(lines: TakeLine[]) {
	return {
		lines: lines.length,
		differences: lines.filter((l) => l.difference !== 0).length,
		unitsFound: lines.reduce((n, l) => n + Math.max(0, l.difference), 0),
		unitsMissing: lines.reduce((n, l) => n + Math.max(0, -l.difference), 0)
	};
}

/**
 * Runs a count: `dryRun` answers the comparison only; otherwise one adjustment per difference in one
 * transaction. `rowOf(i)` names line i in messages (the CSV row, or the list position).
 */
export async function stockTake(
	db: DbOrTx,
	input: readonly CountLine[],
	opts: { dryRun: boolean; actor: { id: number }; countedOn?: Date; rowOf?: (i: number) => number }
): Promise<TakeResult> {
	const rowOf = opts.rowOf ?? ((i: number) => i + 1);
	const countedOn = formatDate(opts.countedOn ?? new Date(), 'UTC');
	const compare = (resolved: Awaited<ReturnType<typeof resolve>>, book: Map<string, number>): TakeLine[] =>
		resolved.map((l) => {
			const b = book.get(`${l.locationId}/${l.partId}/${l.condition}`) ?? 0;
			return { ...l, booked: b, difference: l.counted - b };
		});
	if (opts.dryRun) {
		const resolved = await resolve(db, input, rowOf);
		const lines = compare(resolved, await booked(db, [...new Set(resolved.map((l) => l.partId))]));
		return { dryRun: true, countedOn, lines, totals: summarise(lines), movements: [] };
	}
	return inTransaction(db, async (tx) => {
		const resolved = await resolve(tx, input, rowOf);
		const ids = [...new Set(resolved.map((l) => l.partId))].sort((a, b) => a - b);
		// Lock every counted part first (id order, like every stock operation), then read the books under the locks.
		await tx.select({ id: parts.id }).from(parts).where(and(inArray(parts.id, ids), isNull(parts.archivedAt))).orderBy(parts.id).for('update');
		const lines = compare(resolved, await booked(tx, ids));
		const movements: number[] = [];
		for (const l of lines) {
			if (l.difference === 0) continue;
			const m = await ops.adjust(
				tx,
				{ partId: l.partId, locationId: l.locationId, condition: l.condition, delta: l.difference, reason: STOCK_TAKE_REASON, note: `Counted ${l.counted} on ${countedOn} (booked ${l.booked})` },
				opts.actor
			);
			movements.push(m.id);
		}
		return { dryRun: false, countedOn, lines, totals: summarise(lines), movements };
	});
}

/** What is booked in one location: the lines a drawer count starts from (parts in SKU order). */
export async function drawerContents(db: DbOrTx, locationId: number) {
	const [loc] = await db.select().from(locations).where(eq(locations.id, locationId));
	if (!loc) return null;
	const rows = await db
		.select({ partId: stock.partId, sku: parts.sku, name: parts.name, condition: stock.condition, quantity: stock.quantity })
		.from(stock)
		.innerJoin(parts, eq(parts.id, stock.partId))
		.where(and(eq(stock.locationId, locationId), isNull(parts.archivedAt)))
		.orderBy(parts.sku, stock.condition);
	return { location: loc, lines: rows.filter((r) => r.quantity > 0) };
}

/**
 * The count lines of an uploaded CSV (columns `locationCode, sku, condition, quantity` by name, any
 * order, other columns ignored; rows numbered as in the file, header = 1). 400 naming the missing columns.
 */
export async function linesFromCsv(records: AsyncIterable<string[]>): Promise<{ lines: CountLine[]; rows: number[] }> {
	let index: Record<string, number> | null = null;
	const lines: CountLine[] = [];
	const rows: number[] = [];
	let row = 1;
	for await (const r of records) {
		if (!index) {
			const header = r.map((c) => c.trim().replace(/^\ufeff/, '').toLowerCase());
			const missing = STOCK_TAKE_COLUMNS.filter((c) => c !== 'condition' && !header.includes(c.toLowerCase()));
			if (missing.length) {
				throw new DomainError(400, 'missing-columns', `The file needs the columns ${STOCK_TAKE_COLUMNS.join(', ')}; missing: ${missing.join(', ')}.`, { file: `Missing: ${missing.join(', ')}.` });
			}
			index = Object.fromEntries(STOCK_TAKE_COLUMNS.map((c) => [c, header.indexOf(c.toLowerCase())]));
			continue;
		}
		row++;
		if (r.every((c) => c.trim() === '')) continue;
		if (lines.length >= MAX_LINES) throw new DomainError(400, 'too-many-lines', `At most ${MAX_LINES} lines in one count.`, { file: 'Too many lines.' });
		const at = (c: string) => (index![c] >= 0 ? (r[index![c]] ?? '') : '');
		lines.push({ locationCode: at('locationCode'), sku: at('sku'), condition: at('condition'), quantity: at('quantity') });
		rows.push(row);
	}
	return { lines, rows };
}
