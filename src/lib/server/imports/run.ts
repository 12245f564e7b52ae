/**
 * Runs an import over its stored file: a dry run ("check") plans every batch (plan.ts: validates
 * and classifies each row as new, update, unchanged or rejected) without writing; a commit plans
 * and applies each batch inside ONE transaction, so a failure anywhere leaves the catalogue as it
 * was. Progress and row errors go to the database on their own connection, so every app instance
 * (and a reloaded page) sees them while the run is going.
 *
 * The run is one `for await` over the file's batches: plan, then apply (`passOverFile`; the next
 * batch is planned while the plan before is applied). Memory: two batches and nothing per row of
 * the file: the file is streamed from S3, the duplicate keys live in a temporary table in MariaDB
 * (seen-keys.ts), row errors go to the database batch by batch (at most MAX_STORED_ERRORS of
 * them), and the writer's caches are bounded.
 */
import { DrizzleQueryError, eq } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { isUnavailable } from '$lib/server/db/errno';
import { importRowErrors, imports, suppliers, type ImportRecord } from '$lib/server/db/schema';
import { recordAudit } from '$lib/server/audit';
import { DomainError } from '$lib/server/errors';
import { changeStock } from '$lib/server/stock/version';
import { getDefaultWavelengthNm, syncLabMaterials } from '$lib/server/catalogue';
import type { ObjectStore } from '$lib/server/files/s3';
import { csvRecords, type Delimiter } from './csv';
import { planBatch, readBatch, type BatchPlan, type PlanContext, type ReadBatch, type RunCounts } from './plan';
import { compileMapping } from './rows';
import { openSeenStore, type SeenStore } from './seen-keys';
import { DerivedCache, SupplierIds, writeBatch, type WriteContext } from './writer';

/**
 * Rows per batch. Measured (import bench, 50,000 new parts): 2000 rows took 7 % less CPU than 1000 and 500 took 10 %
 * more, but in the whole bench 2000 gained no rows/s over 1000 (×1.03 against ×1.02, old code = 1) and the heap
 * retained between batches swung by 2 MB, over the bench's 1.5 MB flatness limit.
 */
export const BATCH_ROWS = 1000;
export interface RunHooks {
	/** Called after each batch (inside the commit transaction); a throw aborts the run (tests inject failures here). */
	afterBatch?: (info: { batch: number; rowsDone: number }) => void | Promise<void>;
}

/** Thrown inside the commit when rows were rejected and the user did not ask to skip them. */
class RowsRejected extends Error {}

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
	/** The last progress write, still going while the next batch is applied (see `applyPlan`). */
	progressWrite: Promise<void> | null;
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
	const run: Run = { importId, mode, counts, batchRows: opts.batchRows ?? BATCH_ROWS, hooks: opts.hooks, progressWrite: null };
	let message: string | null = null;
	let status: 'checked' | 'committed' | 'failed' = mode === 'check' ? 'checked' : 'committed';
	let seenStore: SeenStore | null = null;
	try {
		await db.delete(importRowErrors).where(eq(importRowErrors.importId, importId));
		const ctx = await openContext(db, rec, opts.actorId);
		seenStore = ctx.seen;
		if (mode === 'check') await passOverFile(ctx, store, run, null);
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

/** What a run reads: planning's context, plus the record, the choice to skip rejected rows and the writer's. */
interface Ctx extends PlanContext {
	rec: ImportRecord;
	/** Commit the accepted rows even when others were rejected. */
	skipRejected: boolean;
	write: WriteContext;
}

/** What every batch of a run reads: the record, its mapping, suppliers, the lab's wavelength, the writer's caches. The duplicate-key store opens last. */
async function openContext(db: Db, rec: ImportRecord, actorId: number): Promise<Ctx> {
	const supplierRows = await db.select({ id: suppliers.id, name: suppliers.name }).from(suppliers);
	const supplierNames = new Map(supplierRows.map((s) => [s.id, s.name]));
	const options = (rec.options ?? {}) as { skuPrefix?: string; skipRejected?: boolean };
	const ids = new SupplierIds(supplierRows);
	const defaultWavelengthNm = await getDefaultWavelengthNm(db);
	return {
		db,
		importId: rec.id,
		rec,
		header: rec.header,
		cm: compileMapping(rec.header, rec.mapping ?? {}, rec.units ?? {}, rec.delimiter as Delimiter),
		importSupplier: rec.supplierId ? (supplierNames.get(rec.supplierId) ?? null) : null,
		skuPrefix: options.skuPrefix || null,
		skipRejected: !!options.skipRejected,
		suppliers: ids,
		supplierNames,
		storedErrors: 0,
		seenWrite: null,
		write: { suppliers: ids, defaultWavelengthNm, actorId, derived: new DerivedCache() },
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

/** The file's batches with their cells read (CSV parsing and `readBatch` take no database). */
async function* readBatches(ctx: Ctx, store: ObjectStore, size: number): AsyncGenerator<ReadBatch> {
	const object = await store.get(ctx.rec.s3Key);
	for await (const batch of fileBatches(object.body, ctx.rec.delimiter as Delimiter, size)) yield readBatch(ctx, batch);
}

/**
 * What `source` yields, one item ahead: the next item is being made while the caller works on
 * this one (at most one waits, so memory stays bounded).
 */
async function* readAhead<T>(source: AsyncIterator<T>): AsyncGenerator<T> {
	let next = source.next();
	try {
		for (;;) {
			const item = await next;
			if (item.done) return;
			next = source.next();
			next.catch(() => {}); // awaited on the next turn, or dropped when the caller stops
			yield item.value;
		}
	} finally {
		await next.catch(() => {});
		await source.return?.();
	}
}

/**
 * One pass over the file, batch after batch: plan it, then apply the plan (in a commit, inside
 * `tx`). Plans are applied in file order, one at a time. The two overlap, since they cost about the
 * same and would otherwise take turns: batch N is applied (the transaction's connection) while
 * batch N+1 is planned (lookups on the pool, CPU here) and batch N+2 read (`readAhead`).
 */
async function passOverFile(ctx: Ctx, store: ObjectStore, run: Run, tx: Tx | null) {
	let batchNo = 0;
	let applying: Promise<void> | null = null;
	try {
		for await (const read of readAhead(readBatches(ctx, store, run.batchRows))) {
			const plan = await planBatch(ctx, read);
			await applying; // throws when the batch before failed
			applying = applyPlan(ctx, run, tx, plan, ++batchNo);
			applying.catch(() => {}); // awaited above or below; not an unhandled rejection meanwhile
		}
		await applying;
		await ctx.seenWrite; // the last batch's keys: a run whose duplicate-key store failed fails
		await run.progressWrite;
	} finally {
		// Never leave the transaction while a batch still sends statements through it, nor let a progress
		// write land after the outcome.
		await applying?.catch(() => {});
		await run.progressWrite?.catch(() => {});
	}
}

/**
 * Writes one batch's plan (in a commit), adds its counts to the run's and reports progress. The progress
 * write (an autocommit on the pool) is not waited for: it goes while the next batch is written, and the
 * next batch's progress waits for it (so they land in order, and a failed one fails the run one batch later,
 * or at the end of the pass).
 */
async function applyPlan(ctx: Ctx, run: Run, tx: Tx | null, plan: BatchPlan, batchNo: number) {
	if (tx && (plan.creates.length || plan.updates.length)) await writeBatch(tx, plan, ctx.write);
	for (const k of ['created', 'updated', 'unchanged', 'rejected', 'errorCount'] as const) run.counts[k] += plan.counts[k];
	run.counts.rows += plan.rows;
	await run.progressWrite;
	run.progressWrite = progress(ctx.db, run.importId, { ...run.counts }, run.mode);
	run.progressWrite.catch(() => {}); // awaited by the next batch or at the end of the pass
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
			await passOverFile(ctx, store, run, tx);
			if (counts.rejected > 0 && !ctx.skipRejected) {
				throw new RowsRejected(
					`${counts.rejected} row${counts.rejected === 1 ? ' was' : 's were'} rejected, so nothing was written. Fix the file, or choose to skip the rejected rows.`
				);
			}
			await recordAudit(tx, {
				actorId: ctx.write.actorId,
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

