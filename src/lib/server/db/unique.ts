/**
 * ER_DUP_ENTRY (1062) as a conflict that names the field. Two requests that pass the same
 * "is it free?" check at once both insert; the unique index refuses the second, and this turns
 * that refusal into the 409 the first check would have given.
 *
 * `inTransaction` throws it as a DomainError; the API's error mapping catches the rest.
 *
 * The index → field table is derived from the schema (every `uniqueIndex` of every table), so a
 * new unique index needs no entry here: the field is the index's last column (the one that makes
 * it specific, e.g. supplierPartNumber in (supplierId, supplierPartNumber)).
 */
import { getTableColumns, is } from 'drizzle-orm';
import { MySqlTable, getTableConfig } from 'drizzle-orm/mysql-core';
import * as schema from './schema';
import { dbErrno, dbMessage } from './errno';

export const ER_DUP_ENTRY = 1062;

/** Unique index name → the field (camelCase column key) it keeps unique. */
export const UNIQUE_FIELDS: ReadonlyMap<string, string> = (() => {
	const map = new Map<string, string>();
	for (const table of Object.values(schema)) {
		if (!is(table, MySqlTable)) continue;
		const keyOf = new Map(Object.entries(getTableColumns(table)).map(([key, col]) => [col.name, key]));
		for (const index of getTableConfig(table).indexes) {
			if (!index.config.unique) continue;
			const last = index.config.columns.at(-1) as { name?: string } | undefined;
			const field = last?.name ? keyOf.get(last.name) : undefined;
			if (field) map.set(index.config.name, field);
		}
	}
	return map;
})();

/** "supplierPartNumber" → "supplier part number"; "sku" → "SKU". */
function words(field: string): string {
	const w = field.replace(/([a-z0-9])([A-Z])/g, '$1 $2').toLowerCase();
	return w === 'sku' ? 'SKU' : w;
}

/** What a unique index refused: the 409 body (`duplicate-<field>`, a message, the field named). */
export interface Duplicate {
	index: string;
	field: string;
	code: string;
	message: string;
	fields: Record<string, string>;
}

/** The conflict for a database error, or null when `err` is not ER_DUP_ENTRY. */
export function duplicateOf(err: unknown): Duplicate | null {
	if (dbErrno(err) !== ER_DUP_ENTRY) return null;
	// MariaDB: "Duplicate entry 'X' for key 'parts_sku_uq'" (MySQL 8 prefixes the table: 'parts.parts_sku_uq').
	const m = /^Duplicate entry '(.*)' for key '(?:[^'.]+\.)?([^']+)'$/s.exec(dbMessage(err));
	const index = m?.[2] ?? '';
	const field = UNIQUE_FIELDS.get(index) ?? 'id';
	const w = words(field);
	// The entry of a composite index is "value-value" (e.g. supplier id and part number): only a single one is shown.
	const value = m && !index.includes('_pn_') && m[1].length <= 80 ? ` "${m[1]}"` : '';
	return { index, field, code: `duplicate-${w.toLowerCase().replace(/ /g, '-')}`, message: `The ${w}${value} is already in use.`, fields: { [field]: `This ${w} is already in use.` } };
}
