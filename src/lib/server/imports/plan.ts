/**
 * Planning one batch of an import: read its cells (`readBatch`), then (`planBatch`) find the parts
 * its rows refer to, validate each row with the catalogue's `partInputSchema` and classify it (new,
 * update, unchanged, rejected). Writes nothing to the catalogue; the plan is applied by run.ts.
 *
 * Rows are keyed by (supplier, supplier part number) first, then by SKU, and matched against the
 * catalogue as committed (read on the pool, never through the commit's transaction, so a commit
 * classifies every row exactly as the dry run did) plus the file's own earlier rows (seen-keys.ts).
 */
import { and, eq } from 'drizzle-orm';
import type { Db, DbOrTx } from '$lib/server/db';
import { importRowErrors, partSurfaces, parts } from '$lib/server/db/schema';
import { partInputSchema, toInput, type PartInput } from '$lib/server/catalogue';
import { inList } from './bulk-sql';
import { fieldLabel } from './fields';
import { fieldOfPath, readCell, readRow, type CompiledMapping, type ReadRow } from './rows';
import { BatchSeen, type RowKeys, type SeenStore } from './seen-keys';
import type { SupplierIds } from './writer';

/** Row errors kept per import (the count is always exact). */
export const MAX_STORED_ERRORS = 5000;

export interface RowError {
	row: number;
	column: string;
	value: string;
	message: string;
}

export interface RunCounts {
	created: number;
	updated: number;
	unchanged: number;
	rejected: number;
	errorCount: number;
	rows: number;
}

/** What planning a batch reads: the file's mapping and header, the import's defaults, suppliers and the duplicate-key store. */
export interface PlanContext {
	db: Db;
	importId: number;
	cm: CompiledMapping;
	header: string[];
	importSupplier: string | null;
	skuPrefix: string | null;
	suppliers: SupplierIds;
	supplierNames: Map<number, string>;
	seen: SeenStore;
	/** Row errors stored so far (at most MAX_STORED_ERRORS). */
	storedErrors: number;
	/**
	 * The store's write of the previous batch's keys, still going: the next batch's lookup goes after it on the
	 * store's one connection, and the next batch awaits it before planning its rows (so its failure fails the run).
	 */
	seenWrite: Promise<void> | null;
}

/** What planning a batch decided: the writes, and the counts they add. */
export interface BatchPlan {
	rows: number;
	creates: PartInput[];
	updates: { id: number; input: PartInput }[];
	counts: Omit<RunCounts, 'rows'>;
}

type Existing = { part: typeof parts.$inferSelect; surfaces: (typeof partSurfaces.$inferSelect)[]; supplierName: string | null };
type ExistingParts = { bySku: Map<string, Existing>; byPn: Map<string, Existing> };
export type ReadBatch = ({ row: number } & ReadRow)[];

/** A read row with the part it refers to (by supplier part number, else by SKU) and its keys for the duplicate check. */
interface TargetedRow {
	r: ReadBatch[number];
	sku: string | null;
	supplierName: string | null;
	pn: string | null;
	byPn: Existing | undefined;
	bySku: Existing | undefined;
	target: Existing | undefined;
	keys: RowKeys;
}

/**
 * Plans one read batch (`readBatch`) against the catalogue as committed and the file's earlier rows:
 * stores its row errors and the keys of the rows it accepts (that write still going when it returns:
 * `PlanContext.seenWrite`), and returns the writes. Writes nothing to the catalogue.
 */
export async function planBatch(ctx: PlanContext, read: ReadBatch): Promise<BatchPlan> {
	const existing = await existingForBatch(ctx, read);
	const targeted = read.map((r) => targetOf(ctx, r, existing));
	// The keys earlier batches stored (one query for the batch).
	const seen = await BatchSeen.load(
		ctx.seen,
		targeted.map((x) => x.keys)
	);
	await ctx.seenWrite;
	const { errors, counts, creates, updates } = planRows(ctx, targeted, seen);
	// Not awaited here: the write overlaps the apply of the batch before (see `seenWrite`).
	ctx.seenWrite = seen.flush(ctx.seen);
	ctx.seenWrite.catch(() => {});
	await storeRowErrors(ctx, errors);
	return { rows: read.length, creates, updates, counts };
}

/** Reads the cells of one batch, with the import's supplier and SKU prefix filled in (no database, no run state). */
export function readBatch(ctx: PlanContext, batch: readonly { row: number; record: string[] }[]): ReadBatch {
	return batch.map(({ row, record }) => {
		const r = readRow(record, ctx.cm);
		if (r.input.supplier == null && ctx.importSupplier) r.input.supplier = ctx.importSupplier;
		if (!r.input.sku && ctx.skuPrefix && typeof r.input.supplierPartNumber === 'string') {
			r.input.sku = `${ctx.skuPrefix}${r.input.supplierPartNumber}`;
		}
		return Object.assign(r, { row });
	});
}

/** The existing parts the rows of a batch may refer to (one lookup per key kind for the batch). */
async function existingForBatch(ctx: PlanContext, read: ReadBatch): Promise<ExistingParts> {
	const skus = new Set<string>();
	const pairs = new Map<number, string[]>();
	for (const r of read) {
		if (typeof r.input.sku === 'string' && r.input.sku) skus.add(r.input.sku);
		const sid = ctx.suppliers.known(r.input.supplier as string | null);
		if (sid !== null && typeof r.input.supplierPartNumber === 'string') {
			const list = pairs.get(sid) ?? [];
			list.push(r.input.supplierPartNumber);
			pairs.set(sid, list);
		}
	}
	return existingFor(ctx.db, [...skus], pairs, ctx.supplierNames);
}

/** Parts with one of these SKUs or (supplier id, supplier part numbers), with their surfaces. */
async function existingFor(db: DbOrTx, skus: string[], pairs: Map<number, string[]>, supplierNames: Map<number, string>): Promise<ExistingParts> {
	const bySku = new Map<string, Existing>();
	const byPn = new Map<string, Existing>();
	// Separate queries, so each uses its unique index (an OR of the two would scan the table); sent together
	// (on the pool, so on connections of their own), since none needs another's answer.
	const queries = [...pairs].map(([sid, pns]) => db.select().from(parts).where(and(eq(parts.supplierId, sid), inList(parts.supplierPartNumber, pns))));
	if (skus.length) queries.unshift(db.select().from(parts).where(inList(parts.sku, skus)));
	const found = new Map<number, typeof parts.$inferSelect>();
	for (const result of await Promise.all(queries)) for (const p of result) found.set(p.id, p);
	const rows = [...found.values()];
	if (!rows.length) return { bySku, byPn };
	const surf = await db
		.select()
		.from(partSurfaces)
		.where(
			inList(
				partSurfaces.partId,
				rows.map((r) => r.id)
			)
		);
	const surfacesOf = new Map<number, (typeof surf)[number][]>();
	for (const s of surf) surfacesOf.set(s.partId, [...(surfacesOf.get(s.partId) ?? []), s]);
	for (const p of rows) {
		const e: Existing = {
			part: p,
			surfaces: (surfacesOf.get(p.id) ?? []).sort((a, b) => a.position - b.position),
			supplierName: p.supplierId ? (supplierNames.get(p.supplierId) ?? null) : null
		};
		bySku.set(p.sku.toLowerCase(), e);
		if (p.supplierId && p.supplierPartNumber) byPn.set(`${p.supplierId}|${p.supplierPartNumber.toLowerCase()}`, e);
	}
	return { bySku, byPn };
}

/** A row's target part and keys. */
function targetOf(ctx: PlanContext, r: ReadBatch[number], existing: ExistingParts): TargetedRow {
	const sku = typeof r.input.sku === 'string' ? r.input.sku : null;
	const supplierName = (r.input.supplier as string | null) ?? null;
	const pn = typeof r.input.supplierPartNumber === 'string' ? r.input.supplierPartNumber : null;
	const sid = ctx.suppliers.known(supplierName);
	const byPn = sid !== null && pn ? existing.byPn.get(`${sid}|${pn.toLowerCase()}`) : undefined;
	const bySku = sku ? existing.bySku.get(sku.toLowerCase()) : undefined;
	const target = byPn ?? bySku;
	return { r, sku, supplierName, pn, byPn, bySku, target, keys: { partId: target ? target.part.id : null, sku, supplier: supplierName, pn } };
}

/**
 * A part's values as one string, with empty (null) and absent fields alike: a row that a commit
 * compares with a part written by an earlier batch of the same run (stored, so every empty field
 * is null) must compare as the dry run compared it with that batch's row (unmapped fields absent).
 */
const canonical = (p: PartInput) => JSON.stringify(withoutNulls(p));

/** A copy without null properties (at any depth; array items stay): what a replacer dropping nulls gives, without a replacer's cost. */
function withoutNulls(value: unknown): unknown {
	if (value === null || typeof value !== 'object') return value;
	if (Array.isArray(value)) return value.map(withoutNulls);
	const out: Record<string, unknown> = {};
	// Object.keys, not Object.entries: the same keys in the same order, without a pair array per property.
	for (const k of Object.keys(value)) {
		const v = (value as Record<string, unknown>)[k];
		if (v !== null) out[k] = withoutNulls(v);
	}
	return out;
}

/** 32-bit FNV-1a of a string: a small fingerprint of a row's values for the duplicate check. */
function hash(s: string): number {
	let h = 0x811c9dc5;
	for (let i = 0; i < s.length; i++) {
		h ^= s.charCodeAt(i);
		h = Math.imul(h, 0x01000193);
	}
	return h >>> 0;
}

/** The column a field's problem is reported under: the file's header when mapped, else the field's label. */
function columnOf(ctx: PlanContext, field: string): string {
	const i = ctx.cm.index.get(field);
	return i === undefined ? fieldLabel(field) : ctx.header[i];
}

/**
 * A row's problems and, when it has none, its part as validated (merged over the stored part it
 * updates). Validated even when a cell could not be read, so that the report lists every problem of
 * the row at once; a field whose cell was unreadable is not reported twice (it is missing from the input).
 */
function checkRow(ctx: PlanContext, t: TargetedRow, stored: PartInput | null): { data: PartInput | null; rowErrors: RowError[] } {
	const { r, sku, supplierName, pn, byPn, bySku, target } = t;
	const rowErrors: RowError[] = r.errors.map((e) => ({ row: r.row, column: columnOf(ctx, e.field), value: e.value, message: e.message }));
	if (byPn && bySku && byPn.part.id !== bySku.part.id) {
		rowErrors.push({
			row: r.row,
			column: columnOf(ctx, 'sku'),
			value: sku ?? '',
			message: `The SKU ${sku} belongs to another part than ${supplierName} ${pn} (which is ${byPn.part.sku}).`
		});
	}
	const parsed = partInputSchema.safeParse(stored ? { ...stored, ...r.input } : r.input);
	if (parsed.success) return { data: rowErrors.length ? null : parsed.data, rowErrors };
	const fieldsDone = new Set<string>(r.errors.map((e) => e.field));
	for (const issue of parsed.error.issues) {
		const field = fieldOfPath(issue.path);
		if (fieldsDone.has(field) || fieldsDone.has(field + issue.message)) continue;
		fieldsDone.add(field + issue.message);
		const message = field === 'sku' && !sku && !target ? 'Each new part needs a SKU (map a SKU column, or set a SKU prefix).' : issue.message;
		rowErrors.push({ row: r.row, column: columnOf(ctx, field), value: readCell(r.record, ctx.cm, field), message });
	}
	return { data: null, rowErrors };
}

/** The error of a row for a part an earlier row of the file already gave with other values. */
function duplicateError(ctx: PlanContext, t: TargetedRow, seen: BatchSeen, earlierRow: number): RowError {
	const onPn = !t.sku || !seen.hasSku(t.sku);
	return {
		row: t.r.row,
		column: columnOf(ctx, onPn && t.pn ? 'supplierPartNumber' : 'sku'),
		value: (onPn && t.pn ? t.pn : t.sku) ?? '',
		message: `Row ${earlierRow} of this file is for the same part with other values: each part may appear only once.`
	};
}

/** Classifies each targeted row: rejected (with its errors), unchanged, an update or a create. */
function planRows(ctx: PlanContext, targeted: readonly TargetedRow[], seen: BatchSeen) {
	// Only as many errors as may still be stored are kept (the count stays exact).
	const errors: RowError[] = [];
	const counts = { created: 0, updated: 0, unchanged: 0, rejected: 0, errorCount: 0 };
	const creates: PartInput[] = [];
	const updates: { id: number; input: PartInput }[] = [];
	for (const t of targeted) {
		const stored = t.target ? toInput({ ...t.target, latestMeasurement: null }) : null;
		const { data, rowErrors } = checkRow(ctx, t, stored);
		const fingerprint = data ? hash(canonical(data)) : 0;
		// The same part, SKU or supplier part number twice in one file.
		const dupe = seen.find(t.keys);
		if (dupe && data) {
			// The same part with the same values again (a stock export lists a part once per location): nothing to do.
			if (dupe.hash === fingerprint) {
				counts.unchanged++;
				continue;
			}
			rowErrors.push(duplicateError(ctx, t, seen, dupe.row));
		}
		if (rowErrors.length || !data) {
			counts.rejected++;
			counts.errorCount += rowErrors.length;
			for (const e of rowErrors) if (ctx.storedErrors + errors.length < MAX_STORED_ERRORS) errors.push(e);
			continue;
		}
		seen.add(t.keys, data.sku, { row: t.r.row, hash: fingerprint });
		if (!t.target) {
			counts.created++;
			creates.push(data);
			continue;
		}
		const before = partInputSchema.safeParse(stored);
		if (before.success && canonical(before.data) === canonical(data)) counts.unchanged++;
		else {
			counts.updated++;
			updates.push({ id: t.target.part.id, input: data });
		}
	}
	return { errors, counts, creates, updates };
}

/** Stores a batch's kept row errors (cut to the columns' sizes). */
async function storeRowErrors(ctx: PlanContext, errors: readonly RowError[]) {
	if (!errors.length) return;
	const keep = errors.map((e) => ({
		importId: ctx.importId,
		row: e.row,
		column: e.column.slice(0, 120),
		value: e.value.slice(0, 300),
		message: e.message.slice(0, 300)
	}));
	await ctx.db.insert(importRowErrors).values(keep);
	ctx.storedErrors += keep.length;
}
