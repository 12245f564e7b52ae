/**
 * CSV imports: upload (checked, stored in S3, mapping suggested), mapping, dry run, commit,
 * history and error reports. Routes call these; the long steps run in the background of the
 * request that started them and report progress through the `imports` row.
 */
import { randomUUID } from 'node:crypto';
import { and, asc, count, desc, eq, gt, inArray, isNull, lt, notInArray, or } from 'drizzle-orm';
import { z } from 'zod';
import type { Db, DbOrTx } from '$lib/server/db';
import { importRowErrors, imports, suppliers, users, type ImportRecord, type ImportStatus } from '$lib/server/db/schema';
import { DomainError, NotFound } from '$lib/server/errors';
import { recordAudit } from '$lib/server/audit';
import type { ObjectStore } from '$lib/server/files/s3';
import { CSV_MAX_BYTES, csvLine, csvRecords, escapeFormula, spoolCsv, type CheckedCsv, type Delimiter, type SpooledCsv } from './csv';
import { readMultipartStream } from '$lib/server/files/multipart';
import { fieldLabel, hasDecimals, isImportField, isLengthField, LENGTH_UNITS, PRICE_UNITS, priceUnitUnknown, suggestMapping, type PriceUnit, type Suggestion } from './fields';
import fs from 'node:fs';
import type { Readable } from 'node:stream';
import { isStale, runImport, STALE_AFTER_MS, type RunHooks } from './run';

export interface ImportReport {
	id: number;
	status: ImportStatus;
	/** True when a step was running but its heartbeat stopped (the app restarted): it may be started again. */
	interrupted: boolean;
	filename: string;
	sizeBytes: number;
	delimiter: string;
	header: string[];
	supplier: { id: number; name: string } | null;
	mapping: Record<string, string>;
	units: Record<string, string>;
	options: { skuPrefix?: string; skipRejected?: boolean };
	createdAt: string;
	createdBy: { id: number; name: string | null };
	checkedAt: string | null;
	committedAt: string | null;
	rowsTotal: number | null;
	rowsDone: number;
	counts: { created: number; updated: number; unchanged: number; rejected: number };
	errorCount: number;
	errors: { row: number; column: string; value: string; message: string }[];
	message: string | null;
}

export class ImportNotFound extends NotFound {
	constructor(id: number) {
		super(`There is no import ${id}.`);
	}
}

/** `GET /imports`: the history's paging. */
export const listQuerySchema = z
	.object({ page: z.coerce.number().int().min(1).default(1), pageSize: z.coerce.number().int().min(1).max(200).default(50) })
	.strict();

/** `GET /imports/:id`: how many row errors to include. */
export const reportQuerySchema = z.object({ errors: z.coerce.number().int().min(0).max(5000).default(200) }).strict();

/**
 * Checks a CSV, stores it in S3 and records the import with a suggested mapping. Nothing is stored
 * when the file is refused. `file` is the bytes, a stream of them, or an upload already taken by
 * `spoolCsv` (then the caller removes its temporary file); the file is never held whole in memory
 * unless it is given as bytes.
 */
export async function createImport(
	db: DbOrTx,
	store: ObjectStore,
	input: { filename: string; file: Uint8Array | AsyncIterable<Uint8Array> | SpooledCsv; supplierId: number | null; actorId: number }
): Promise<{ id: number; checked: CheckedCsv; suggestion: Suggestion }> {
	const given = isSpooled(input.file) ? input.file : null;
	const csv = given ?? (await spoolCsv(input.file as Uint8Array | AsyncIterable<Uint8Array>));
	try {
		let saved: Suggestion | null = null;
		if (input.supplierId !== null) {
			const [s] = await db.select().from(suppliers).where(eq(suppliers.id, input.supplierId));
			if (!s) throw new DomainError(400, 'invalid-input', 'That supplier does not exist.', { supplier: 'Choose a supplier from the list.' });
			saved = (s.importMapping as Suggestion | null) ?? null;
		}
		const suggestion = suggestMapping(csv.header, saved);
		const priceCol = suggestion.mapping.unitPrice;
		if (priceCol && !suggestion.units.unitPrice) {
			const u = await priceUnitFromValues(fs.createReadStream(csv.path), csv.delimiter, csv.header.indexOf(priceCol));
			if (u.unit) suggestion.units.unitPrice = u.unit;
		}
		const key = `imports/${randomUUID()}.csv`;
		const filename = (input.filename.split(/[\\/]/).pop() || 'import.csv').slice(0, 255);
		await store.putFile(key, csv.path, 'text/csv; charset=utf-8', { 'original-filename': filename, sha256: csv.sha256 });
		try {
			const [{ id }] = await db
				.insert(imports)
				.values({
					userId: input.actorId,
					filename,
					s3Key: key,
					sizeBytes: csv.size,
					sha256: csv.sha256,
					delimiter: csv.delimiter,
					header: csv.header,
					supplierId: input.supplierId,
					mapping: suggestion.mapping,
					units: suggestion.units,
					options: {},
					rowsTotal: csv.rowCount
				})
				.$returningId();
			await recordAudit(db, { actorId: input.actorId, action: 'import.upload', targetType: 'import', targetId: id, detail: { filename, rows: csv.rowCount } });
			const checked: CheckedCsv = { delimiter: csv.delimiter, header: csv.header, preview: csv.preview, rowCount: csv.rowCount };
			return { id, checked, suggestion };
		} catch (err) {
			await store.delete(key).catch(() => undefined);
			throw err;
		}
	} finally {
		if (!given) await csv.remove();
	}
}

/**
 * The unit a price column's values show: any cell written with decimals ("38.00", "29,50") means
 * currency units; a column of whole numbers only (3800, 45) cannot be told apart (38.00 or 3800.00?),
 * so `unit` is null and `sample` holds a few of its cells for the message. Reads the file once.
 */
export async function priceUnitFromValues(source: Readable, delimiter: Delimiter, column: number): Promise<{ unit: PriceUnit | null; sample: string[] }> {
	const sample: string[] = [];
	let first = true;
	for await (const r of csvRecords(source, delimiter)) {
		if (first) {
			first = false;
			continue;
		}
		const cell = (r[column] ?? '').trim();
		if (!cell) continue;
		if (hasDecimals(cell)) {
			source.destroy();
			return { unit: 'major', sample };
		}
		if (sample.length < 3) sample.push(cell);
	}
	return { unit: null, sample };
}

function isSpooled(f: unknown): f is SpooledCsv {
	return typeof f === 'object' && f !== null && 'path' in f && 'sha256' in f && 'header' in f;
}

/**
 * Reads an upload request (multipart, field "file") for an import: the CSV streams through
 * `spoolCsv` as it arrives, the text fields are collected whatever their order. `skipUnnamed`: a
 * file part without a name is "no file chosen" (what a browser form sends), not a file. The caller
 * removes `file.csv` when done; on a failure nothing is left behind.
 */
export function readCsvUpload(request: Request, opts: { skipUnnamed?: boolean } = {}) {
	return readMultipartStream(request, {
		maxBodyBytes: CSV_MAX_BYTES + 256 * 1024,
		maxFileBytes: CSV_MAX_BYTES,
		handleFile: async (part) => {
			if (opts.skipUnnamed && part.filename === '') {
				part.stream.resume();
				return null;
			}
			return { csv: await spoolCsv(part.stream), filename: part.filename };
		},
		discard: async (file) => file?.csv.remove()
	});
}

const unitSchema = z.string();
/** A mapping as the wizard or the API sends it. Columns must exist in the file's header. */
export function mappingSchema(header: readonly string[]) {
	return z
		.object({
			mapping: z.record(z.string(), z.string()),
			units: z.record(z.string(), unitSchema).default({}),
			skuPrefix: z
				.string()
				.trim()
				.max(20)
				.regex(/^[A-Za-z0-9._/-]*$/, 'Use letters, digits and . _ / - only.')
				.default(''),
			skipRejected: z.boolean().default(false)
		})
		.strict()
		.superRefine((m, ctx) => {
			const used = new Map<string, string>();
			for (const [field, col] of Object.entries(m.mapping)) {
				if (!isImportField(field)) ctx.addIssue({ code: 'custom', path: ['mapping', field], message: `Unknown field "${field}".` });
				else if (col && !header.includes(col)) ctx.addIssue({ code: 'custom', path: ['mapping', field], message: `The file has no column "${col}".` });
				else if (col && used.has(col)) ctx.addIssue({ code: 'custom', path: ['mapping', field], message: `The column "${col}" is already used for ${fieldLabel(used.get(col)!)}.` });
				if (col) used.set(col, field);
			}
			for (const [field, u] of Object.entries(m.units)) {
				const ok = field === 'unitPrice' ? (PRICE_UNITS as readonly string[]).includes(u) : isLengthField(field) && (LENGTH_UNITS as readonly string[]).includes(u);
				if (!ok) ctx.addIssue({ code: 'custom', path: ['units', field], message: `"${u}" is not a unit for ${field}.` });
			}
			const has = (f: string) => !!m.mapping[f];
			if (!has('sku') && !has('supplierPartNumber')) {
				ctx.addIssue({ code: 'custom', path: ['mapping', 'sku'], message: 'Map a SKU column or a supplier part number column: rows are matched to parts by one of them.' });
			}
		});
}
export type MappingInput = z.infer<ReturnType<typeof mappingSchema>>;

async function record(db: DbOrTx, id: number): Promise<ImportRecord> {
	const [rec] = await db.select().from(imports).where(eq(imports.id, id));
	if (!rec) throw new ImportNotFound(id);
	return rec;
}

/**
 * Saves the column mapping, units and options (validated against the file's header). A mapped price
 * column needs a unit: given, stated by its header, or shown by its values (read from `store`); else
 * 400 naming `units.unitPrice` (issue 16: a price is never guessed).
 */
export async function saveMapping(db: DbOrTx, id: number, body: unknown, store?: ObjectStore): Promise<MappingInput> {
	const rec = await record(db, id);
	if (rec.status === 'committed') throw new DomainError(409, 'already-committed', 'This import is already in the catalogue; start a new import to change it.');
	if (!isStale(rec) && (rec.status === 'checking' || rec.status === 'committing')) {
		throw new DomainError(409, 'busy', 'This import is running; wait until it has finished.');
	}
	const m = mappingSchema(rec.header).parse(body);
	const mapping = Object.fromEntries(Object.entries(m.mapping).filter(([, c]) => c));
	const units = Object.fromEntries(Object.entries(m.units).filter(([f]) => mapping[f]));
	if (mapping.unitPrice && !units.unitPrice) {
		const byName = suggestMapping([mapping.unitPrice]).units.unitPrice;
		let unit: string | null = byName ?? null;
		let sample: string[] = [];
		if (!unit && store) {
			const object = await store.get(rec.s3Key);
			try {
				({ unit, sample } = await priceUnitFromValues(object.body, rec.delimiter as Delimiter, rec.header.indexOf(mapping.unitPrice)));
			} finally {
				object.body.destroy();
			}
		}
		if (!unit) {
			const message = priceUnitUnknown(mapping.unitPrice, sample);
			throw new DomainError(400, 'price-unit-unknown', message, { 'units.unitPrice': message });
		}
		units.unitPrice = unit;
	}
	await db
		.update(imports)
		.set({ mapping, units, options: { skuPrefix: m.skuPrefix || undefined, skipRejected: m.skipRejected }, status: rec.status === 'failed' ? 'uploaded' : rec.status })
		.where(eq(imports.id, id));
	return { ...m, mapping, units };
}

/**
 * Claims the import for a run (status checking / committing), so that two clicks or two app
 * instances never run it twice. 409 when it is running or already committed.
 */
export async function beginRun(db: DbOrTx, id: number, mode: 'check' | 'commit'): Promise<void> {
	const rec = await record(db, id);
	if (rec.status === 'committed') throw new DomainError(409, 'already-committed', 'This import is already in the catalogue.');
	if (!rec.mapping || !Object.keys(rec.mapping).length) throw new DomainError(409, 'no-mapping', 'Map the columns first.');
	const staleBefore = new Date(Date.now() - STALE_AFTER_MS);
	const [res] = await db
		.update(imports)
		// A commit starts from no written rows: the dry run's counts said what the file would do, not what was written.
		.set({ status: mode === 'check' ? 'checking' : 'committing', rowsDone: 0, heartbeatAt: new Date(), message: null, ...(mode === 'commit' ? { created: 0, updated: 0, unchanged: 0 } : {}) })
		.where(
			and(
				eq(imports.id, id),
				or(notInArray(imports.status, ['checking', 'committing', 'committed']), and(inArray(imports.status, ['checking', 'committing']), or(isNull(imports.heartbeatAt), lt(imports.heartbeatAt, staleBefore))))
			)
		);
	if ((res as unknown as { affectedRows: number }).affectedRows !== 1) {
		throw new DomainError(409, 'busy', 'This import is already running.');
	}
}

/** Starts a run in the background (the caller polls `getReport`). */
export function startRun(db: Db, store: ObjectStore, id: number, mode: 'check' | 'commit', actorId: number, hooks?: RunHooks) {
	void runImport(db, store, id, mode, { actorId, hooks }).catch((err) => console.error(`[import ${id}] could not record its outcome:`, err));
}

/** Runs a step to its end (the API's one-shot import, tests, the bench). */
export async function runNow(db: Db, store: ObjectStore, id: number, mode: 'check' | 'commit', actorId: number, opts: { hooks?: RunHooks; batchRows?: number; outcomeRetryMs?: number[] } = {}) {
	await beginRun(db, id, mode);
	return runImport(db, store, id, mode, { actorId, ...opts });
}

/** The import with its counts, progress and the first `errorLimit` row errors. */
export async function getReport(db: DbOrTx, id: number, errorLimit = 200): Promise<ImportReport> {
	const [row] = await db
		.select({ i: imports, userName: users.name, supplierName: suppliers.name })
		.from(imports)
		.leftJoin(users, eq(users.id, imports.userId))
		.leftJoin(suppliers, eq(suppliers.id, imports.supplierId))
		.where(eq(imports.id, id));
	if (!row) throw new ImportNotFound(id);
	const i = row.i;
	const errors = errorLimit
		? await db
				.select({ row: importRowErrors.row, column: importRowErrors.column, value: importRowErrors.value, message: importRowErrors.message })
				.from(importRowErrors)
				.where(eq(importRowErrors.importId, id))
				.orderBy(asc(importRowErrors.row), asc(importRowErrors.id))
				.limit(errorLimit)
		: [];
	return {
		id: i.id,
		status: i.status,
		interrupted: isStale(i),
		filename: i.filename,
		sizeBytes: i.sizeBytes,
		delimiter: i.delimiter,
		header: i.header,
		supplier: i.supplierId ? { id: i.supplierId, name: row.supplierName ?? '' } : null,
		mapping: i.mapping ?? {},
		units: i.units ?? {},
		options: (i.options ?? {}) as ImportReport['options'],
		createdAt: i.createdAt.toISOString(),
		createdBy: { id: i.userId, name: row.userName },
		checkedAt: i.checkedAt?.toISOString() ?? null,
		committedAt: i.committedAt?.toISOString() ?? null,
		rowsTotal: i.rowsTotal,
		rowsDone: i.rowsDone,
		counts: { created: i.created, updated: i.updated, unchanged: i.unchanged, rejected: i.rejected },
		errorCount: i.errorCount,
		errors: errors.map((e) => ({ ...e, value: e.value ?? '' })),
		message: i.message
	};
}

/** The import history, newest first. */
export async function listImports(db: DbOrTx, opts: { page?: number; pageSize?: number } = {}) {
	const pageSize = Math.min(opts.pageSize ?? 50, 200);
	const page = Math.max(1, opts.page ?? 1);
	const [rows, [{ n }]] = await Promise.all([
		db
			.select({ i: imports, userName: users.name, supplierName: suppliers.name })
			.from(imports)
			.leftJoin(users, eq(users.id, imports.userId))
			.leftJoin(suppliers, eq(suppliers.id, imports.supplierId))
			.orderBy(desc(imports.createdAt), desc(imports.id))
			.limit(pageSize)
			.offset((page - 1) * pageSize),
		db.select({ n: count() }).from(imports)
	]);
	return {
		total: n,
		page,
		pageSize,
		items: rows.map(({ i, userName, supplierName }) => ({
			id: i.id,
			filename: i.filename,
			status: i.status,
			interrupted: isStale(i),
			createdAt: i.createdAt.toISOString(),
			createdBy: { id: i.userId, name: userName },
			supplier: supplierName,
			rowsTotal: i.rowsTotal,
			counts: { created: i.created, updated: i.updated, unchanged: i.unchanged, rejected: i.rejected },
			errorCount: i.errorCount,
			mappedFields: Object.keys(i.mapping ?? {}).length
		}))
	};
}

/** The error report of an import as CSV (row, column, value, message), streamed in pages. */
export async function* errorReportCsv(db: DbOrTx, id: number): AsyncGenerator<string> {
	await record(db, id);
	yield csvLine(['row', 'column', 'value', 'message']);
	let lastId = 0;
	for (;;) {
		const rows = await db
			.select()
			.from(importRowErrors)
			.where(and(eq(importRowErrors.importId, id), gt(importRowErrors.id, lastId)))
			.orderBy(asc(importRowErrors.id))
			.limit(1000);
		if (!rows.length) return;
		lastId = rows[rows.length - 1].id;
		yield rows.map((r) => csvLine([r.row, escapeFormula(r.column), escapeFormula(r.value ?? ''), escapeFormula(r.message)])).join('');
	}
}

/** The first `n` data rows of the stored file (for the mapping screen). */
export async function previewRows(db: DbOrTx, store: ObjectStore, id: number, n = 5): Promise<string[][]> {
	const rec = await record(db, id);
	const object = await store.get(rec.s3Key);
	const out: string[][] = [];
	let first = true;
	try {
		for await (const r of csvRecords(object.body, rec.delimiter as Delimiter)) {
			if (first) {
				first = false;
				continue;
			}
			out.push(r);
			if (out.length >= n) break;
		}
	} finally {
		object.body.destroy();
	}
	return out;
}
