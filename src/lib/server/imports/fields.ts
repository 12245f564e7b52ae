/**
 * The columns of a Glasscrib CSV: the Part JSON field names (DESIGN.md), with the surfaces
 * flattened as r1Mm, t1Mm, material1, r2Mm, ... The export writes exactly these headers, so an
 * exported file imports without any mapping; a supplier's list is mapped onto them. The fields,
 * their types, units, labels and header words come from the descriptor (`$lib/catalogue/part-fields`).
 */
import { unit } from 'mathjs';
import { MAX_SURFACES, PART_FIELD, SCALAR_PART_FIELDS, isNumericType, mappingLabel, surfaceColumns, type PartFieldSpec, type ScalarPartFieldName } from '$lib/catalogue/part-fields';

/** Surfaces a CSV row may describe (the part schema allows as many). */
export { MAX_SURFACES };

export const SCALAR_FIELDS = SCALAR_PART_FIELDS.map((f) => f.name as ScalarPartFieldName);
export type ScalarField = ScalarPartFieldName;

export const surfaceFields = surfaceColumns;

/** Every importable field, in the export's column order. */
export const IMPORT_FIELDS: readonly string[] = [
	...SCALAR_FIELDS,
	...Array.from({ length: MAX_SURFACES }, (_, i) => surfaceFields(i + 1)).flat()
];
const FIELD_SET = new Set(IMPORT_FIELDS);
export const isImportField = (f: string) => FIELD_SET.has(f);

const specOf = (f: string): PartFieldSpec | undefined => (f !== 'surfaces' && Object.hasOwn(PART_FIELD, f) ? (PART_FIELD as Record<string, PartFieldSpec>)[f] : undefined);
const SURFACE_CELL = /^[rt]\d+Mm$/;

export const isNumericField = (f: string) => (specOf(f) ? isNumericType(specOf(f)!.type) : SURFACE_CELL.test(f));

/** Fields holding a length: the file may give them in mm or inches. */
export const isLengthField = (f: string) => specOf(f)?.unit === 'mm' || SURFACE_CELL.test(f);

/** Fields that take their default when the cell is blank (the others are cleared). */
export const hasDefault = (f: string) => specOf(f)?.default !== undefined;

export const LENGTH_UNITS = ['mm', 'in'] as const;
export type LengthUnit = (typeof LENGTH_UNITS)[number];
/**
 * unitPrice: 'major' = currency units (38.50), as Part JSON and the export write it under the name
 * `unitPrice`; 'minor' = whole cents (3850), for supplier lists that write them.
 */
export const PRICE_UNITS = ['major', 'minor'] as const;
export type PriceUnit = (typeof PRICE_UNITS)[number];

/**
 * The unit a price column's header states, or null when it states none: our own name `unitPrice` and
 * headers naming a currency ("Price (EUR)", "Preis €") are currency units; `unitPriceMinor` and headers
 * naming cents or minor units are cents.
 */
export function suggestPriceUnit(header: string): PriceUnit | null {
	const h = header.trim();
	if (h === 'unitPrice') return 'major';
	if (/minor|\bcents?\b|\bct\b|\(ct\)/i.test(h)) return 'minor';
	if (/\b(eur|usd|gbp|chf|sek|dkk|nok|pln|czk)\b|[€$£]/i.test(h)) return 'major';
	return null;
}

/** A price cell written with decimals ("38.00", "29,50"): only currency units are written so. */
export function hasDecimals(cell: string): boolean {
	return /^\s*[€$£]?\s*\d*[.,]\d+\s*$/.test(cell);
}

/** Why a price column is refused when neither its header nor its values tell the unit. */
export function priceUnitUnknown(column: string, sample: readonly string[]): string {
	const eg = sample.filter(Boolean).slice(0, 2);
	const first = eg[0] ?? '3800';
	return (
		`The column "${column}" holds only whole numbers${eg.length ? ` (${eg.join(', ')})` : ''}, so Glasscrib cannot tell whether ${first} means ` +
		`${first}.00 or ${(Number(first) / 100).toFixed(2)}. Choose how the price is written, or name the column unitPrice (currency units, 38.00) or unitPriceMinor (cents, 3800).`
	);
}

/** Millimetres per unit, from mathjs (so the factor is the standard one, 25.4 mm per inch exactly). */
export const MM_PER: Record<LengthUnit, number> = {
	mm: 1,
	in: unit(1, 'inch').toNumber('mm')
};

/** Human labels for the mapping screen. */
export function fieldLabel(f: string): string {
	const spec = specOf(f);
	if (spec) return mappingLabel(spec);
	const m = /^(r|t|material)(\d+)(Mm)?$/.exec(f);
	if (m) return `${m[1] === 'r' ? 'Radius' : m[1] === 't' ? 'Thickness after' : 'Material after'} surface ${m[2]}`;
	return f;
}

const norm = (s: string) =>
	s
		.toLowerCase()
		.replace(/\(.*?\)|\[.*?\]/g, ' ')
		.replace(/[^a-z0-9]+/g, '');

/**
 * Header words (normalised: lower case, letters and digits only, bracketed units dropped) → field:
 * each field's own name and the descriptor's header words, and the words for the first glass.
 */
const SYNONYMS: Record<string, string> = Object.fromEntries([
	...SCALAR_PART_FIELDS.flatMap((f) => [norm(f.name), ...(f.headers ?? [])].map((h) => [h, f.name])),
	...['glass', 'material', 'substrate'].map((h) => [h, 'material1'])
]);

/** The field a header cell most likely means, or null. */
export function suggestField(header: string): string | null {
	const h = header.trim();
	if (isImportField(h)) return h; // the export's own names
	const n = norm(h);
	if (Object.hasOwn(SYNONYMS, n)) return SYNONYMS[n];
	let m = /^(?:r|radius|roc|radiusofcurvature)(\d{1,2})(?:mm)?$/.exec(n);
	if (m && Number(m[1]) >= 1 && Number(m[1]) <= MAX_SURFACES) return `r${Number(m[1])}Mm`;
	m = /^(?:t|thickness|d)(\d{1,2})(?:mm)?$/.exec(n);
	if (m && Number(m[1]) >= 1 && Number(m[1]) <= MAX_SURFACES) return `t${Number(m[1])}Mm`;
	m = /^(?:material|glass|n)(\d{1,2})$/.exec(n);
	if (m && Number(m[1]) >= 1 && Number(m[1]) <= MAX_SURFACES) return `material${Number(m[1])}`;
	return null;
}

/** The unit a header names, e.g. "Diameter (in)" or "EFL [inch]"; null when it names none. */
export function suggestUnit(header: string): LengthUnit | null {
	const h = header.toLowerCase();
	if (/[([]\s*(in|inch|inches|")\s*[)\]]|\binch(es)?\b/.test(h)) return 'in';
	if (/[([]\s*mm\s*[)\]]|mm$/.test(h)) return 'mm';
	return null;
}

export interface Suggestion {
	mapping: Record<string, string>;
	units: Record<string, string>;
}

/**
 * A mapping for a header row: the supplier's saved mapping where its columns still exist, then
 * the header names. Each field gets at most one column and each column at most one field.
 */
export function suggestMapping(header: readonly string[], saved?: Suggestion | null): Suggestion {
	const mapping: Record<string, string> = {};
	const units: Record<string, string> = {};
	const used = new Set<string>();
	if (saved) {
		for (const [field, col] of Object.entries(saved.mapping ?? {})) {
			if (isImportField(field) && header.includes(col) && !used.has(col)) {
				mapping[field] = col;
				used.add(col);
				if (saved.units?.[field]) units[field] = saved.units[field];
			}
		}
	}
	for (const col of header) {
		if (used.has(col)) continue;
		const field = suggestField(col);
		if (!field || mapping[field]) continue;
		mapping[field] = col;
		used.add(col);
		if (isLengthField(field)) {
			const u = suggestUnit(col);
			if (u) units[field] = u;
		}
		if (field === 'unitPrice') {
			const u = suggestPriceUnit(col);
			if (u) units[field] = u;
		}
	}
	return { mapping, units };
}
