/**
 * SQL for the import's hot path: multi-row INSERT statements (with RETURNING for new ids) and long `IN (...)` lists. Drizzle's
 * builder turns every value into its own SQL chunk (about 20,000 for a 1000-row insert, 1000 for
 * the lookup of a batch's SKUs), which cost more than the database itself in the import
 * benchmark; here the text is built in one pass with mysql2's own escaping (`escape`, the function
 * mysql2 applies to `?` placeholders, so the bytes sent are the same as with Drizzle's builder).
 * Column names come from the Drizzle table, never from input.
 */
import { escape } from 'mysql2';
import { getTableColumns, getTableName, sql, type SQL } from 'drizzle-orm';
import type { AnyMySqlColumn, MySqlTable } from 'drizzle-orm/mysql-core';
import type { Tx } from '$lib/server/db';

/** The values this writer sends: plain numbers, strings and NULL (no dates, JSON or buffers). */
type Cell = number | string | null;

/** The result header of an INSERT (mysql2). */
interface InsertHeader {
	insertId: number;
	affectedRows: number;
}

/**
 * `INSERT INTO t (cols) VALUES (...),(...)` for `rows` (each has every key of `keys`), optionally
 * followed by `ON DUPLICATE KEY UPDATE c = VALUES(c), ...` for `updateKeys`. One statement.
 */
export async function insertRows<T extends MySqlTable, K extends keyof T['_']['columns'] & string>(
	tx: Tx,
	table: T,
	keys: readonly K[],
	rows: readonly { [P in NoInfer<K>]: Cell }[],
	updateKeys: readonly NoInfer<K>[] = []
): Promise<InsertHeader> {
	let text = insertText(table, keys, rows);
	if (updateKeys.length) text += ` on duplicate key update ${updateKeys.map((k) => `${columnName(table, k)} = values(${columnName(table, k)})`).join(', ')}`;
	const [header] = (await tx.execute(sql.raw(text))) as unknown as [InsertHeader];
	return header;
}

/**
 * `INSERT INTO t (cols) VALUES (...),(...) RETURNING r1, r2`: one statement that gives back the
 * `returning` columns of every inserted row (MariaDB's INSERT ... RETURNING), e.g. the new ids.
 */
export async function insertReturning<T extends MySqlTable, K extends keyof T['_']['columns'] & string, R extends keyof T['_']['columns'] & string>(
	tx: Tx,
	table: T,
	keys: readonly K[],
	rows: readonly { [P in NoInfer<K>]: Cell }[],
	returning: readonly R[]
): Promise<{ [P in R]: Cell }[]> {
	const text = `${insertText(table, keys, rows)} returning ${returning.map((k) => `${columnName(table, k)} as \`${k}\``).join(', ')}`;
	const [out] = (await tx.execute(sql.raw(text))) as unknown as [{ [P in R]: Cell }[]];
	return out;
}

/** A column's name in SQL, from the Drizzle table. */
function columnName(table: MySqlTable, key: string): string {
	return '`' + (getTableColumns(table) as Record<string, { name: string }>)[key].name + '`';
}

/** The text of `INSERT INTO t (cols) VALUES (...),(...)`, values escaped in one pass. */
function insertText(table: MySqlTable, keys: readonly string[], rows: readonly Record<string, Cell>[]): string {
	const parts: string[] = [];
	for (const row of rows) {
		let tuple = '(';
		for (let i = 0; i < keys.length; i++) {
			const v = row[keys[i]];
			if (v !== null && typeof v !== 'number' && typeof v !== 'string') throw new TypeError(`insertRows: ${keys[i]} is not a number, string or null`);
			if (typeof v === 'number' && !Number.isFinite(v)) throw new TypeError(`insertRows: ${keys[i]} is not a finite number`);
			tuple += (i ? ',' : '') + (v === null ? 'NULL' : typeof v === 'number' ? String(v) : escape(v));
		}
		parts.push(tuple + ')');
	}
	return `insert into \`${getTableName(table)}\` (${keys.map((k) => columnName(table, k)).join(', ')}) values ${parts.join(',')}`;
}

/** `column IN (values)` as one chunk for Drizzle's `where` (values escaped here); `false` for no values. */
export function inList(column: AnyMySqlColumn, values: readonly (string | number)[]): SQL {
	if (!values.length) return sql`false`;
	const text = values
		.map((v) => {
			if (typeof v === 'number') {
				if (!Number.isFinite(v)) throw new TypeError('inList: not a finite number');
				return String(v);
			}
			return escape(v);
		})
		.join(',');
	return sql`${column} in (${sql.raw(text)})`;
}
