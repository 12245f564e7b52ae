/**
 * One CSV record → the part input fields it gives (only the mapped ones), with cell errors.
 * Validation of the whole part is the catalogue's `partInputSchema` (see run.ts); this file only
 * reads cells: numbers (decimal comma allowed in ;- and tab-separated files), units, blanks.
 */
import { unit } from 'mathjs';
import { hasDefault, isLengthField, isNumericField, MAX_SURFACES, MM_PER, SCALAR_FIELDS, surfaceFields, type LengthUnit } from './fields';
import { unescapeFormula, type Delimiter } from './csv';
import { isWholeCents } from '$lib/money';

export interface CellError {
	field: string;
	value: string;
	message: string;
}

/** How a mapped field's cell is read: its column, and the descriptor's facts about the field (looked up once per run). */
interface FieldReader {
	field: string;
	column: number | undefined;
	numeric: boolean;
	defaulted: boolean;
}

/** A mapping resolved to column indexes, ready for fast row reading. */
export interface CompiledMapping {
	/** field → column index */
	index: Map<string, number>;
	units: Record<string, string>;
	delimiter: Delimiter;
	/** Highest surface number with any mapped column (0: surfaces are not in the file). */
	surfaceCount: number;
	/** The mapped scalar fields, in the descriptor's order. */
	scalars: readonly FieldReader[];
	/** Radius, thickness and material after it of surfaces 1 … surfaceCount + 1 (at most MAX_SURFACES). */
	surfaces: readonly (readonly [FieldReader, FieldReader, FieldReader])[];
}

function fieldReader(field: string, index: Map<string, number>): FieldReader {
	return { field, column: index.get(field), numeric: isNumericField(field), defaulted: hasDefault(field) };
}

export function compileMapping(header: readonly string[], mapping: Record<string, string>, units: Record<string, string>, delimiter: Delimiter): CompiledMapping {
	const index = new Map<string, number>();
	let surfaceCount = 0;
	for (const [field, col] of Object.entries(mapping)) {
		const i = header.indexOf(col);
		if (i < 0) continue;
		index.set(field, i);
		const m = /^(?:r|t|material)(\d+)/.exec(field);
		if (m) surfaceCount = Math.max(surfaceCount, Number(m[1]));
	}
	surfaceCount = Math.min(surfaceCount, MAX_SURFACES);
	const scalars = SCALAR_FIELDS.filter((f) => index.has(f)).map((f) => fieldReader(f, index));
	const surfaces = surfaceCount
		? Array.from({ length: Math.min(surfaceCount + 1, MAX_SURFACES) }, (_, k) => {
				const [rf, tf, mf] = surfaceFields(k + 1);
				return [fieldReader(rf, index), fieldReader(tf, index), fieldReader(mf, index)] as const;
			})
		: [];
	return { index, units, delimiter, surfaceCount, scalars, surfaces };
}

// A number, optionally followed by a length unit: "25.4", "1 in", "25,4 mm" (the comma only when it cannot be the delimiter).
const NUMBER_WITH_UNIT = /^([-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:e[-+]?\d+)?)\s*(mm|cm|m|in|inch|inches|")?$/i;
const UNIT_NAMES: Record<string, string> = { mm: 'mm', cm: 'cm', m: 'm', in: 'inch', inch: 'inch', inches: 'inch', '"': 'inch' };

/** Parses a numeric cell; returns a number or an error message. */
export function parseNumberCell(raw: string, field: string, defaultUnit: LengthUnit | 'minor' | 'major' | undefined, delimiter: Delimiter): number | string {
	const m = NUMBER_WITH_UNIT.exec(raw);
	if (!m) return isLengthField(field) ? 'Not a number (a length such as 25.4 or 1 in).' : 'Not a number.';
	let digits = m[1];
	if (digits.includes(',')) {
		if (delimiter === ',' || digits.includes('.')) return 'Not a number.';
		digits = digits.replace(',', '.');
	}
	const value = Number(digits);
	if (!Number.isFinite(value)) return 'Not a number.';
	if (m[2]) {
		if (!isLengthField(field)) return 'This field takes a plain number, without a unit.';
		// mathjs converts the unit written in the cell (the regex above keeps the text to a number and a known unit).
		return unit(value, UNIT_NAMES[m[2].toLowerCase()]).toNumber('mm');
	}
	if (isLengthField(field)) return value * MM_PER[(defaultUnit as LengthUnit) ?? 'mm'];
	if (field === 'unitPrice') {
		// The part input takes currency units (38.5); a cents column is divided here.
		if (defaultUnit === 'major') return isWholeCents(value) ? value : 'At most two decimals: a price in currency units such as 38.50.';
		if (defaultUnit === 'minor') {
			return Number.isInteger(value)
				? value / 100
				: 'Not whole cents: this column is read as cents (3850). If the file writes prices like 38.50, choose "currency units" for the unit price.';
		}
		return 'The unit of the price column is not known: choose currency units (38.50) or cents (3850).';
	}
	return value;
}

/** Kinds as a supplier may write them → ours. */
const KIND_WORDS: Record<string, string> = {
	planoconvex: 'plano-convex',
	pcx: 'plano-convex',
	biconvex: 'biconvex',
	dcx: 'biconvex',
	doubleconvex: 'biconvex',
	planoconcave: 'plano-concave',
	pcv: 'plano-concave',
	biconcave: 'biconcave',
	dcv: 'biconcave',
	doubleconcave: 'biconcave',
	positivemeniscus: 'positive-meniscus',
	negativemeniscus: 'negative-meniscus',
	achromaticdoublet: 'achromatic-doublet',
	achromat: 'achromatic-doublet',
	doublet: 'achromatic-doublet',
	other: 'other'
};

export interface ReadRow {
	/** The mapped fields in part input form (surfaces only when the file has surface columns). */
	input: Record<string, unknown>;
	errors: CellError[];
	/** The record the row was read from (`readCell` gives a mapped field's raw cell, for error reports). */
	record: readonly string[];
}

/** The raw cell of a mapped field (trimmed, formula prefix stripped; '' when the field is not mapped). */
export function readCell(record: readonly string[], cm: CompiledMapping, field: string): string {
	return cellAt(record, cm.index.get(field));
}

function cellAt(record: readonly string[], column: number | undefined): string {
	return column === undefined ? '' : unescapeFormula((record[column] ?? '').trim());
}

/** A mapped cell's value from its raw text: null when blank, undefined when unreadable (its error is added to `errors`). */
function cellValue(raw: string, f: FieldReader, cm: CompiledMapping, errors: CellError[]): unknown {
	if (raw === '') return null;
	const field = f.field;
	if (f.numeric) {
		const n = parseNumberCell(raw, field, cm.units[field] as LengthUnit, cm.delimiter);
		if (typeof n === 'string') {
			errors.push({ field, value: raw, message: n });
			return undefined;
		}
		return n;
	}
	if (field === 'kind') return KIND_WORDS[raw.toLowerCase().replace(/[^a-z]/g, '')] ?? raw;
	if (field === 'currency') return raw.toUpperCase();
	return raw;
}

/** Reads the mapped cells of one record. */
export function readRow(record: readonly string[], cm: CompiledMapping): ReadRow {
	const errors: CellError[] = [];
	const input: Record<string, unknown> = {};
	for (const f of cm.scalars) {
		const v = cellValue(cellAt(record, f.column), f, cm, errors);
		if (v === undefined) continue;
		// Blank cells of fields with a default take the default; others become null (cleared).
		if (v === null && f.defaulted) continue;
		input[f.field] = v;
	}
	if (cm.surfaceCount > 0) {
		// Surface k exists when any of its cells is filled, or when surface k-1 has a medium after it
		// (thickness or material): a blank last surface is then a flat one.
		const surfaces: { radiusMm: number | null; thicknessMm?: number | null; material?: string | null }[] = [];
		let last = 0;
		for (let k = 1; k <= cm.surfaces.length; k++) {
			const [rf, tf, mf] = cm.surfaces[k - 1];
			const rRaw = cellAt(record, rf.column);
			const tRaw = cellAt(record, tf.column);
			const mRaw = cellAt(record, mf.column);
			// An unmapped field reads as a blank cell: null.
			const r = cellValue(rRaw, rf, cm, errors);
			const t = cellValue(tRaw, tf, cm, errors);
			const m = cellValue(mRaw, mf, cm, errors);
			const s: { radiusMm: number | null; thicknessMm?: number | null; material?: string | null } = { radiusMm: typeof r === 'number' ? r : null };
			if (t !== null && t !== undefined) s.thicknessMm = t as number;
			if (m !== null && m !== undefined) s.material = m as string;
			surfaces.push(s);
			if (rRaw !== '') last = Math.max(last, k);
			if (tRaw !== '' || mRaw !== '') last = Math.max(last, Math.min(k + 1, MAX_SURFACES));
		}
		input.surfaces = surfaces.slice(0, last);
	}
	return { input, errors, record };
}

/** The surface-aware CSV field of a zod issue path (['surfaces', 1, 'radiusMm'] → 'r2Mm'). */
export function fieldOfPath(path: readonly PropertyKey[]): string {
	if (path[0] === 'surfaces' && typeof path[1] === 'number') {
		const k = path[1] + 1;
		if (path[2] === 'radiusMm') return `r${k}Mm`;
		if (path[2] === 'thicknessMm') return `t${k}Mm`;
		if (path[2] === 'material') return `material${k}`;
		return `r${k}Mm`;
	}
	if (path[0] === 'surfaces') return 'r1Mm';
	return String(path[0] ?? 'row');
}
