/**
 * Runs an import over its stored file: a dry run ("check") validates every row and classifies it
 * (new, update, unchanged, rejected) without writing; a commit does the same inside ONE transaction
 * and writes in batches, so a failure anywhere leaves the catalogue as it was. Progress and row
 * errors go to the database on their own connection, so every app instance (and a reloaded page)
 * sees them while the run is going.
 *
 * Rows are keyed by (supplier, supplier part number) first, then by SKU, and matched against the
 * catalogue as it stands outside the run's transaction (so a commit classifies every row exactly as
 * the dry run did) plus the file's own earlier rows (seen-keys.ts).
 *
 * Three stages overlap: reading batch N+2 (CSV and cells), validating batch N+1 (lookups on the
 * pool, zod and optics checks, the duplicate check) and writing batch N (the transaction's own
 * connection). Memory: those three batches and nothing per row of the file: the file is streamed
 * from S3, the duplicate keys live in a temporary table in MariaDB, row errors go to the database
 * batch by batch (at most MAX_STORED_ERRORS of them), and the writer's caches are bounded.
 */
import { and, DrizzleQueryError, eq } from 'drizzle-orm';
import type { Db, DbOrTx, Tx } from '$lib/server/db';
import { isUnavailable } from '$lib/server/db/errno';
import { importRowErrors, imports, partSurfaces, parts, suppliers, type ImportRecord } from '$lib/server/db/schema';
import { recordAudit } from '$lib/server/audit';
import { DomainError } from '$lib/server/errors';
import { changeStock } from '$lib/server/stock/version';
import { getDefaultWavelengthNm, partInputSchema, syncLabMaterials, toInput, type PartInput } from '$lib/server/catalogue';
import type { ObjectStore } from '$lib/server/files/s3';
import { inList } from './bulk-sql';
import { csvRecords, type Delimiter } from './csv';
import { fieldLabel } from './fields';
import { compileMapping, fieldOfPath, readRow, type CompiledMapping, type ReadRow } from './rows';
import { BatchSeen, openSeenStore, type RowKeys, type SeenStore } from './seen-keys';
import { DerivedCache, InsertIds, SupplierIds, writeBatch } from './writer';

export const BATCH_ROWS = 1000;
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

export interface RunHooks {
	/** Called after each batch (inside the commit transaction); a throw aborts the run (tests inject failures here). */
	afterBatch?: (info: { batch: number; rowsDone: number }) => void | Promise<void>;
}

/** Thrown inside the commit when rows were rejected and the user did not ask to skip them. */
class RowsRejected extends Error {}

type Existing = { part: typeof parts.$inferSelect; surfaces: (typeof partSurfaces.$inferSelect)[]; supplierName: string | null };

/** Parts that rows of a batch may refer to, by SKU and by (supplier id, supplier part number). */
async function existingFor(db: DbOrTx, skus: string[], pairs: Map<number, string[]>, supplierNames: Map<number, string>) {
	const bySku = new Map<string, Existing>();
	const byPn = new Map<string, Existing>();
	// Separate queries, so each uses its unique index (an OR of the two would scan the table).
	const found = new Map<number, typeof parts.$inferSelect>();
	if (skus.length) for (const p of await db.select().from(parts).where(inList(parts.sku, skus))) found.set(p.id, p);
	for (const [sid, pns] of pairs) {
		for (const p of await db.select().from(parts).where(and(eq(parts.supplierId, sid), inList(parts.supplierPartNumber, pns)))) found.set(p.id, p);
	}
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

/**
 * A part's values as one string, with empty (null) and absent fields alike: a row that a commit
 * compares with a part written by an earlier batch of the same run (stored, so every empty field
 * is null) must compare as the dry run compared it with that batch's row (unmapped fields absent).
 */
const canonical = (p: PartInput) => JSON.stringify(p, (_key, value) => (value === null ? undefined : value));

/** 32-bit FNV-1a of a string: a small fingerprint of a row's values for the duplicate check. */
function hash(s: string): number {
	let h = 0x811c9dc5;
	for (let i = 0; i < s.length; i++) {
		h ^= s.charCodeAt(i);
		h = Math.imul(h, 0x01000193);
	}
	return h >>> 0;
}

interface Ctx {
	db: Db;
	rec: ImportRecord;
	cm: CompiledMapping;
	header: string[];
	importSupplier: string | null;
	skuPrefix: string | null;
	/** Commit the accepted rows even when others were rejected. */
	skipRejected: boolean;
	suppliers: SupplierIds;
	derived: DerivedCache;
	insertIds: InsertIds;
	supplierNames: Map<number, string>;
	seen: SeenStore;
	storedErrors: number;
	defaultWavelengthNm: number;
	actorId: number;
}

type ReadBatch = ({ row: number } & ReadRow)[];

/** Reads the cells of one batch (no database, no run state changed: it may run ahead of the batch before). */
function readBatch(ctx: Ctx, batch: readonly { row: number; record: string[] }[]): ReadBatch {
	return batch.map(({ row, record }) => {
		const r = readRow(record, ctx.cm);
		if (r.input.supplier == null && ctx.importSupplier) r.input.supplier = ctx.importSupplier;
		if (!r.input.sku && ctx.skuPrefix && typeof r.input.supplierPartNumber === 'string') {
			r.input.sku = `${ctx.skuPrefix}${r.input.supplierPartNumber}`;
		}
		return { row, ...r };
	});
}

/** What validating a batch decided: the writes, and the counts they add. */
interface BatchPlan {
	rows: number;
	creates: PartInput[];
	updates: { id: number; input: PartInput }[];
	counts: Omit<RunCounts, 'rows'>;
}

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

/** The column a field's problem is reported under: the file's header when mapped, else the field's label. */
function columnOf(ctx: Ctx, field: string): string {
	const i = ctx.cm.index.get(field);
	return i === undefined ? fieldLabel(field) : ctx.header[i];
}

/** The existing parts the rows of a batch may refer to (one lookup per key kind for the batch). */
async function existingForBatch(ctx: Ctx, read: ReadBatch) {
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

/** A row's target part and keys. */
function targetOf(ctx: Ctx, r: ReadBatch[number], existing: Awaited<ReturnType<typeof existingFor>>): TargetedRow {
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
 * A row's problems and, when it has none, its part as validated (merged over the stored part it
 * updates). Validated even when a cell could not be read, so that the report lists every problem of
 * the row at once; a field whose cell was unreadable is not reported twice (it is missing from the input).
 */
function checkRow(ctx: Ctx, t: TargetedRow, stored: PartInput | null): { data: PartInput | null; rowErrors: RowError[] } {
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
		rowErrors.push({ row: r.row, column: columnOf(ctx, field), value: r.cell(field), message });
	}
	return { data: null, rowErrors };
}

/** The error of a row for a part an earlier row of the file already gave with other values. */
function duplicateError(ctx: Ctx, t: TargetedRow, seen: BatchSeen, earlierRow: number): RowError {
	const onPn = !t.sku || !seen.hasSku(t.sku);
	return {
		row: t.r.row,
		column: columnOf(ctx, onPn && t.pn ? 'supplierPartNumber' : 'sku'),
		value: (onPn && t.pn ? t.pn : t.sku) ?? '',
		message: `Row ${earlierRow} of this file is for the same part with other values: each part may appear only once.`
	};
}

/** Classifies each targeted row: rejected (with its errors), unchanged, an update or a create. */
function planRows(ctx: Ctx, targeted: readonly TargetedRow[], seen: BatchSeen) {
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
async function storeRowErrors(ctx: Ctx, errors: readonly RowError[]) {
	if (!errors.length) return;
	const keep = errors.map((e) => ({
		importId: ctx.rec.id,
		row: e.row,
		column: e.column.slice(0, 120),
		value: e.value.slice(0, 300),
		message: e.message.slice(0, 300)
	}));
	await ctx.db.insert(importRowErrors).values(keep);
	ctx.storedErrors += keep.length;
}

/**
 * Validates and classifies one read batch against the catalogue as committed (never the run's own
 * transaction, so it may run while the batch before is being written) and the file's earlier
 * rows; stores its row errors and the keys of the rows it accepts. Writes nothing to the catalogue.
 */
async function validateBatch(ctx: Ctx, read: ReadBatch): Promise<BatchPlan> {
	const existing = await existingForBatch(ctx, read);
	// Each row's target part and keys, then the keys earlier batches stored (one query for the batch).
	const targeted = read.map((r) => targetOf(ctx, r, existing));
	const seen = await BatchSeen.load(
		ctx.seen,
		targeted.map((x) => x.keys)
	);
	const { errors, counts, creates, updates } = planRows(ctx, targeted, seen);
	await seen.flush(ctx.seen);
	await storeRowErrors(ctx, errors);
	return { rows: read.length, creates, updates, counts };
}

/**
 * Progress after a batch. A dry run's counts are what the file would do, so they are shown as they
 * grow; a commit's created/updated/unchanged stay 0 until its transaction has committed (rows written
 * inside an open transaction are not in the catalogue yet, and never will be if it dies).
 */
async function progress(db: Db, id: number, counts: RunCounts, mode: 'check' | 'commit') {
	await db
		.update(imports)
		.set({
			rowsDone: counts.rows,
			...(mode === 'check' ? { created: counts.created, updated: counts.updated, unchanged: counts.unchanged } : {}),
			rejected: counts.rejected,
			errorCount: counts.errorCount,
			heartbeatAt: new Date()
		})
		.where(eq(imports.id, id));
}

/**
 * Runs a started import (status 'checking' or 'committing', see service.beginRun) to its end and
 * records the outcome. Never throws for a failure of the run itself: it ends in status 'failed' with a message.
 */
export async function runImport(
	db: Db,
	store: ObjectStore,
	importId: number,
	mode: 'check' | 'commit',
	opts: { actorId: number; hooks?: RunHooks; batchRows?: number; outcomeRetryMs?: number[] }
): Promise<RunOutcome> {
	activeRuns.add(importId);
	try {
		await syncLabMaterials(db);
		return await runImportUnwatched(db, store, importId, mode, opts);
	} finally {
		activeRuns.delete(importId);
	}
}

/** Imports this process is running now (the watchdog leaves them alone, however slow their heartbeat). */
export const activeRuns = new Set<number>();

/** One run's state: what it does and the counts it has reached. */
interface Run {
	importId: number;
	mode: 'check' | 'commit';
	counts: RunCounts;
	batchRows: number;
	hooks?: RunHooks;
}

async function runImportUnwatched(
	db: Db,
	store: ObjectStore,
	importId: number,
	mode: 'check' | 'commit',
	opts: { actorId: number; hooks?: RunHooks; batchRows?: number; outcomeRetryMs?: number[] }
): Promise<RunOutcome> {
	const [rec] = await db.select().from(imports).where(eq(imports.id, importId));
	if (!rec) throw new Error(`import ${importId} does not exist`);
	const counts: RunCounts = { created: 0, updated: 0, unchanged: 0, rejected: 0, errorCount: 0, rows: 0 };
	const run: Run = { importId, mode, counts, batchRows: opts.batchRows ?? BATCH_ROWS, hooks: opts.hooks };
	let message: string | null = null;
	let status: 'checked' | 'committed' | 'failed' = mode === 'check' ? 'checked' : 'committed';
	let seenStore: SeenStore | null = null;
	try {
		await db.delete(importRowErrors).where(eq(importRowErrors.importId, importId));
		const ctx = await openContext(db, rec, opts.actorId);
		seenStore = ctx.seen;
		if (mode === 'check') await readFile(ctx, store, run, null);
		else await commitFile(ctx, store, run);
	} catch (thrown) {
		status = 'failed';
		message = failureMessage(thrown, importId, mode);
		if (mode === 'commit') {
			// Nothing was written (the transaction was rolled back, or refused for rejected rows): the record
			// must not claim rows it does not hold. What the file would do is the dry run's to say.
			counts.created = counts.updated = counts.unchanged = 0;
		}
	} finally {
		await seenStore?.close();
	}
	await recordOutcome(db, importId, { ...counts, status, message }, opts.outcomeRetryMs);
	return { ...counts, status, message };
}

/** What every batch of a run reads: the record, its mapping, suppliers, the lab's wavelength, the writer's caches. The duplicate-key store opens last. */
async function openContext(db: Db, rec: ImportRecord, actorId: number): Promise<Ctx> {
	const supplierRows = await db.select({ id: suppliers.id, name: suppliers.name }).from(suppliers);
	const supplierNames = new Map(supplierRows.map((s) => [s.id, s.name]));
	const options = (rec.options ?? {}) as { skuPrefix?: string; skipRejected?: boolean };
	const defaultWavelengthNm = await getDefaultWavelengthNm(db);
	return {
		db,
		rec,
		header: rec.header,
		cm: compileMapping(rec.header, rec.mapping ?? {}, rec.units ?? {}, rec.delimiter as Delimiter),
		importSupplier: rec.supplierId ? (supplierNames.get(rec.supplierId) ?? null) : null,
		skuPrefix: options.skuPrefix || null,
		skipRejected: !!options.skipRejected,
		suppliers: new SupplierIds(supplierRows),
		derived: new DerivedCache(),
		insertIds: new InsertIds(),
		supplierNames,
		storedErrors: 0,
		defaultWavelengthNm,
		actorId,
		seen: await openSeenStore(db.$client)
	};
}

/** The file's data rows in batches of `size`, with their row numbers (the header, checked at upload, is row 1). */
async function* fileBatches(body: Parameters<typeof csvRecords>[0], delimiter: Delimiter, size: number) {
	let batch: { row: number; record: string[] }[] = [];
	let rowNo = 1;
	let first = true;
	for await (const record of csvRecords(body, delimiter)) {
		if (first) {
			first = false;
			continue;
		}
		rowNo++;
		batch.push({ row: rowNo, record });
		if (batch.length >= size) {
			yield batch;
			batch = [];
		}
	}
	if (batch.length) yield batch;
}

/**
 * One pass over the file: each batch is read, validated, then (in a commit, inside `tx`) written.
 * Batches go through validation one after another and through writing one after another, in file
 * order; validating batch N+1 (lookups on the pool, CPU here) goes on while the transaction's
 * connection writes batch N, and reading batch N+2 while both wait for the database.
 */
async function readFile(ctx: Ctx, store: ObjectStore, run: Run, tx: Tx | null) {
	const object = await store.get(ctx.rec.s3Key);
	let batches = 0;
	let validating: Promise<void> = Promise.resolve();
	let writing: Promise<void> = Promise.resolve();
	const flush = async (batch: { row: number; record: string[] }[]) => {
		const read = readBatch(ctx, batch);
		await validating; // throws if an earlier batch failed
		validating = (async () => {
			const plan = await validateBatch(ctx, read);
			await writing;
			writing = applyPlan(ctx, run, tx, plan, ++batches);
			writing.catch(() => {}); // handled where it is awaited, not as an unhandled rejection
		})();
		validating.catch(() => {});
	};
	try {
		for await (const batch of fileBatches(object.body, ctx.rec.delimiter as Delimiter, run.batchRows)) await flush(batch);
	} finally {
		// Never leave the transaction while a batch still sends statements through it.
		await validating.catch(() => {});
		await writing.catch(() => {});
	}
	await validating;
	await writing;
}

/** Writes one batch's plan (in a commit), adds its counts to the run's and reports progress. */
async function applyPlan(ctx: Ctx, run: Run, tx: Tx | null, plan: BatchPlan, batchNo: number) {
	if (tx && (plan.creates.length || plan.updates.length)) {
		await writeBatch(tx, plan, { suppliers: ctx.suppliers, defaultWavelengthNm: ctx.defaultWavelengthNm, actorId: ctx.actorId, derived: ctx.derived, insertIds: ctx.insertIds });
	}
	for (const k of ['created', 'updated', 'unchanged', 'rejected', 'errorCount'] as const) run.counts[k] += plan.counts[k];
	run.counts.rows += plan.rows;
	await progress(ctx.db, run.importId, run.counts, run.mode);
	await run.hooks?.afterBatch?.({ batch: batchNo, rowsDone: run.counts.rows });
}

/**
 * The commit: the whole file in one transaction, refused whole when rows were rejected and the user did
 * not ask to skip them. One attempt: a retry would read and write the whole file again; a deadlock fails
 * the run with its message.
 */
async function commitFile(ctx: Ctx, store: ObjectStore, run: Run) {
	const { rec } = ctx;
	const { counts } = run;
	await changeStock(
		ctx.db,
		async (tx) => {
			await readFile(ctx, store, run, tx);
			if (counts.rejected > 0 && !ctx.skipRejected) {
				throw new RowsRejected(
					`${counts.rejected} row${counts.rejected === 1 ? ' was' : 's were'} rejected, so nothing was written. Fix the file, or choose to skip the rejected rows.`
				);
			}
			await recordAudit(tx, {
				actorId: ctx.actorId,
				action: 'import.commit',
				targetType: 'import',
				targetId: run.importId,
				detail: { filename: rec.filename, created: counts.created, updated: counts.updated, unchanged: counts.unchanged, rejected: counts.rejected }
			});
			if (rec.supplierId && rec.mapping) {
				// Next time a file of this supplier comes in, the wizard starts from this mapping.
				await tx
					.update(suppliers)
					.set({ importMapping: { mapping: rec.mapping, units: rec.units ?? {} } })
					.where(eq(suppliers.id, rec.supplierId));
			}
		},
		{ attempts: 1 }
	);
}

/** A failed run's message: the database's own words for a failed statement, not the statement (a batch insert is about 1 MB of SQL). Logs what was not a refusal. */
function failureMessage(thrown: unknown, importId: number, mode: 'check' | 'commit'): string {
	const err = thrown instanceof DrizzleQueryError && thrown.cause instanceof Error ? thrown.cause : thrown;
	if (err instanceof RowsRejected) return err.message;
	const statement = thrown instanceof DrizzleQueryError ? ` (statement: ${thrown.query.slice(0, 200)}…)` : '';
	console.error(`[import ${importId}] ${mode} failed${statement}:`, err);
	return `The import stopped: ${isUnavailable(thrown) ? 'the connection to the database was lost' : err instanceof Error ? err.message.slice(0, 300).replace(/\.$/, '') : String(err)}. ${mode === 'commit' ? 'Nothing was written to the catalogue.' : ''}`.trim();
}

export type RunOutcome = RunCounts & { status: 'checked' | 'committed' | 'failed'; message: string | null };

/** Outcomes a run could not write (the database was away); the watchdog writes them when it is back. */
export const pendingOutcomes = new Map<number, RunOutcome>();

/** Writes a run's outcome on the import record. */
export async function writeOutcome(db: Db, importId: number, o: RunOutcome) {
	const now = new Date();
	await db
		.update(imports)
		.set({
			status: o.status,
			message: o.message,
			rowsDone: o.rows,
			created: o.created,
			updated: o.updated,
			unchanged: o.unchanged,
			rejected: o.rejected,
			errorCount: o.errorCount,
			heartbeatAt: now,
			...(o.status === 'checked' ? { checkedAt: now } : {}),
			...(o.status === 'committed' ? { committedAt: now } : {})
		})
		.where(eq(imports.id, importId));
}

/** Pauses between attempts to write an outcome (about 8 s in all) before the watchdog takes over. */
const OUTCOME_RETRY_MS = [250, 500, 1000, 2000, 4000];

/**
 * Writes the outcome, trying again while the database is away. When it stays away, the outcome is
 * left to the watchdog (`pendingOutcomes`) and the caller gets a 503 that says what happened.
 */
async function recordOutcome(db: Db, importId: number, o: RunOutcome, retryMs = OUTCOME_RETRY_MS) {
	for (let attempt = 0; ; attempt++) {
		try {
			await writeOutcome(db, importId, o);
			pendingOutcomes.delete(importId);
			return;
		} catch (err) {
			if (attempt >= retryMs.length) {
				pendingOutcomes.set(importId, o);
				console.error(`[import ${importId}] could not record its outcome (${o.status}); the watchdog will:`, err instanceof Error ? err.message : err);
				throw new DomainError(
					503,
					'database-unavailable',
					`The connection to the database was lost during the import. ${o.status === 'committed' ? 'It was written to the catalogue' : 'Nothing was written to the catalogue'}; the import's page shows the outcome once the database is back.`
				);
			}
			await new Promise((r) => setTimeout(r, retryMs[attempt]));
		}
	}
}

/** Marks a step as interrupted when its heartbeat stopped (the app restarted mid-run). */
export const STALE_AFTER_MS = 60_000;

export function isStale(rec: Pick<ImportRecord, 'status' | 'heartbeatAt'>, now = Date.now()): boolean {
	return (rec.status === 'checking' || rec.status === 'committing') && (!rec.heartbeatAt || now - rec.heartbeatAt.getTime() > STALE_AFTER_MS);
}

