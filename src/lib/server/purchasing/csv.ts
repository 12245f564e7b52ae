/**
 * The reorder board's CSV for a supplier: one row per selected part, with the quantity to
 * order. Text cells that a spreadsheet would run as a formula (starting with = + - @, tab or
 * CR) get a leading apostrophe, which `parseOrderCsv` strips again (SECURITY.md, V5).
 * Prices are written in currency units with two decimals ("12.50") next to their currency, under the
 * column name `unitPrice`, as everywhere else in the product.
 */
import Papa from 'papaparse';
import type { BoardRow } from './board';
import { priceText } from '$lib/money';

export const ORDER_CSV_COLUMNS = [
	'sku',
	'name',
	'supplier',
	'supplierPartNumber',
	'quantity',
	'unitPrice',
	'currency',
	'leadTimeDays',
	'onHand',
	'available',
	'reorderPoint'
] as const;

export interface OrderLine {
	sku: string;
	name: string;
	supplier: string | null;
	supplierPartNumber: string | null;
	quantity: number;
	/** Currency units (38.5 = 38.50 in `currency`). */
	unitPrice: number | null;
	currency: string;
	leadTimeDays: number | null;
	onHand: number;
	available: number;
	reorderPoint: number;
}

const RISKY = /^[=+\-@\t\r]/;
const guard = (s: string | null) => (s == null ? '' : RISKY.test(s) ? `'${s}` : s);
const unguard = (s: string) => (s.startsWith("'") && RISKY.test(s.slice(1)) ? s.slice(1) : s);

/** Currency units to "12.50" (empty without a price). */
export function formatPrice(major: number | null): string {
	return priceText(major);
}

/** "12.50" to 12.5 (null for an empty cell); at most two decimals. */
export function parsePrice(s: string): number | null {
	const t = s.trim();
	if (!t) return null;
	if (!/^\d+(?:\.\d{1,2})?$/.test(t)) throw new Error(`Not a price: "${s}"`);
	return Number(t);
}

/** A board row as an order line with the chosen quantity (default: the suggestion). */
export function orderLine(row: BoardRow, quantity = row.suggestedQuantity): OrderLine {
	return {
		sku: row.sku,
		name: row.name,
		supplier: row.supplier,
		supplierPartNumber: row.supplierPartNumber,
		quantity,
		unitPrice: row.unitPrice,
		currency: row.currency,
		leadTimeDays: row.leadTimeDays,
		onHand: row.onHand,
		available: row.available,
		reorderPoint: row.reorderPoint
	};
}

/** The CSV text (header row of ORDER_CSV_COLUMNS, CRLF line ends, UTF-8). */
export function toOrderCsv(lines: readonly OrderLine[]): string {
	return Papa.unparse(
		{
			fields: [...ORDER_CSV_COLUMNS],
			data: lines.map((l) => [
				guard(l.sku),
				guard(l.name),
				guard(l.supplier),
				guard(l.supplierPartNumber),
				String(l.quantity),
				formatPrice(l.unitPrice),
				guard(l.currency),
				l.leadTimeDays == null ? '' : String(l.leadTimeDays),
				String(l.onHand),
				String(l.available),
				String(l.reorderPoint)
			])
		},
		{ newline: '\r\n', quotes: false }
	);
}

/** Reads the CSV back (the inverse of toOrderCsv; used by tests and by anyone re-importing an order). */
export function parseOrderCsv(text: string): OrderLine[] {
	const parsed = Papa.parse<Record<string, string>>(text.replace(/^\ufeff/, ''), { header: true, skipEmptyLines: true });
	if (parsed.errors.length) throw new Error(parsed.errors[0].message);
	const int = (s: string) => {
		if (!/^\d+$/.test(s.trim())) throw new Error(`Not a whole number: "${s}"`);
		return Number(s);
	};
	const text_ = (s: string | undefined) => (s == null || s === '' ? null : unguard(s));
	return parsed.data.map((r) => ({
		sku: unguard(r.sku ?? ''),
		name: unguard(r.name ?? ''),
		supplier: text_(r.supplier),
		supplierPartNumber: text_(r.supplierPartNumber),
		quantity: int(r.quantity ?? ''),
		unitPrice: parsePrice(r.unitPrice ?? ''),
		currency: unguard(r.currency ?? ''),
		leadTimeDays: r.leadTimeDays ? int(r.leadTimeDays) : null,
		onHand: int(r.onHand ?? ''),
		available: int(r.available ?? ''),
		reorderPoint: int(r.reorderPoint ?? '')
	}));
}
