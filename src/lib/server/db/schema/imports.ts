import { char, datetime, index, int, json, mysqlEnum, mysqlTable, timestamp, varchar } from 'drizzle-orm/mysql-core';
import { id, ref } from './columns';
import { users } from './auth';
import { suppliers } from './catalogue';


/**
 * uploaded → (checking → checked)* → committing → committed; any step may end in failed.
 * `checked` means a dry run finished; `committed` means the rows are in the catalogue.
 */
export const IMPORT_STATUSES = ['uploaded', 'checking', 'checked', 'committing', 'committed', 'failed'] as const;
export type ImportStatus = (typeof IMPORT_STATUSES)[number];

/** One CSV import: the file (kept in S3), the column mapping, what the last run found and how far it got. */
export const imports = mysqlTable(
	'imports',
	{
		id: id(),
		userId: ref('user_id')
			.notNull()
			.references(() => users.id),
		filename: varchar('filename', { length: 255 }).notNull(),
		/** The uploaded CSV in S3 (`imports/<random UUID>.csv`). */
		s3Key: varchar('s3_key', { length: 200 }).notNull(),
		sizeBytes: int('size_bytes', { unsigned: true }).notNull(),
		sha256: char('sha256', { length: 64 }).notNull(),
		delimiter: varchar('delimiter', { length: 1 }).notNull(),
		/** The file's header cells, in order. */
		header: json('header').$type<string[]>().notNull(),
		/** Supplier chosen for the whole file (rows may still name their own). */
		supplierId: ref('supplier_id').references(() => suppliers.id),
		/** Glasscrib field → header cell. */
		mapping: json('mapping').$type<Record<string, string>>(),
		/** Length field → 'mm' | 'in'. */
		units: json('units').$type<Record<string, string>>(),
		/** Other choices: { skuPrefix?, skipRejected? }. */
		options: json('options').$type<Record<string, unknown>>(),
		status: mysqlEnum('status', IMPORT_STATUSES).notNull().default('uploaded'),
		/** Data rows in the file (known after the first run) and rows handled by the current run. */
		rowsTotal: int('rows_total', { unsigned: true }),
		rowsDone: int('rows_done', { unsigned: true }).notNull().default(0),
		created: int('created', { unsigned: true }).notNull().default(0),
		updated: int('updated', { unsigned: true }).notNull().default(0),
		unchanged: int('unchanged', { unsigned: true }).notNull().default(0),
		rejected: int('rejected', { unsigned: true }).notNull().default(0),
		/** Row errors found (the stored list may be capped, this count is not). */
		errorCount: int('error_count', { unsigned: true }).notNull().default(0),
		/** Why the last run failed, for people. */
		message: varchar('message', { length: 500 }),
		createdAt: timestamp('created_at').notNull().defaultNow(),
		checkedAt: datetime('checked_at'),
		committedAt: datetime('committed_at'),
		/** Last sign of life of a running step; a step silent for long is reported as interrupted. */
		heartbeatAt: datetime('heartbeat_at', { fsp: 3 })
	},
	(t) => [index('imports_created_idx').on(t.createdAt), index('imports_user_idx').on(t.userId)]
);

/** What is wrong with a row of an import's file (from its latest run). */
export const importRowErrors = mysqlTable(
	'import_row_errors',
	{
		id: id(),
		importId: ref('import_id')
			.notNull()
			.references(() => imports.id, { onDelete: 'cascade' }),
		/** 1-based line of the data row in the file; the header row is row 1, so data starts at 2. */
		row: int('row', { unsigned: true }).notNull(),
		column: varchar('column', { length: 120 }).notNull(),
		value: varchar('value', { length: 300 }),
		message: varchar('message', { length: 300 }).notNull()
	},
	(t) => [index('import_row_errors_import_row_idx').on(t.importId, t.row)]
);

export type ImportRecord = typeof imports.$inferSelect;
export type ImportRowError = typeof importRowErrors.$inferSelect;
