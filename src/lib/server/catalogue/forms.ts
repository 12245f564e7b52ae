/**
 * Form data → the plain objects the services validate. Numbers are converted when they
 * parse; anything else is passed on as typed so zod's message names the field. Empty
 * inputs become null (optional fields) and are dropped when `dropEmpty` lists them.
 */
import { isNumericType, MAX_SURFACES, PART_FIELD, SCALAR_PART_FIELDS, type PartFieldSpec } from '$lib/catalogue/part-fields';

export function toNumber(v: FormDataEntryValue | null): number | string | null {
	if (v === null) return null;
	const s = String(v).trim().replace(',', '.');
	if (s === '') return null;
	// Decimal notation only: Number() would also read "0x10" as 16 and "0b11" as 3.
	if (!/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(s)) return String(v);
	const n = Number(s);
	return Number.isFinite(n) ? n : String(v);
}

export function toText(v: FormDataEntryValue | null): string | null {
	if (v === null) return null;
	const s = String(v).trim();
	return s === '' ? null : s;
}

/** Reads the named fields: `numbers` as numbers, the others as text; empty ones are left out. */
export function readForm(form: FormData, numbers: readonly string[], texts: readonly string[]): Record<string, unknown> {
	const out: Record<string, unknown> = {};
	for (const k of numbers) {
		const v = toNumber(form.get(k));
		if (v !== null) out[k] = v;
	}
	for (const k of texts) {
		const v = toText(form.get(k));
		if (v !== null) out[k] = v;
	}
	return out;
}

/** The raw string values of a form, to refill it after an error. */
export function formStrings(form: FormData): Record<string, string> {
	const out: Record<string, string> = {};
	for (const [k, v] of form.entries()) if (typeof v === 'string') out[k] = v;
	return out;
}

const NUMBER_PART_FIELDS = SCALAR_PART_FIELDS.filter((f) => isNumericType(f.type)).map((f) => f.name);
const TEXT_PART_FIELDS = SCALAR_PART_FIELDS.filter((f) => !isNumericType(f.type)).map((f) => f.name);
const OPTIONAL_PART_FIELDS = SCALAR_PART_FIELDS.filter((f) => f.optional).map((f) => f.name);

/** Part form → part input: the descriptor's scalar fields plus `surfaces.<i>.radiusMm|thicknessMm|material` rows. */
export function readPartForm(form: FormData, opts: { clearEmpty?: boolean } = {}): Record<string, unknown> {
	const input = readForm(form, NUMBER_PART_FIELDS, TEXT_PART_FIELDS);
	// On edit an emptied optional field clears the stored value.
	if (opts.clearEmpty) {
		for (const k of OPTIONAL_PART_FIELDS) if (!(k in input) && form.has(k)) input[k] = null;
	}
	const count = Number(form.get('surfaceCount') ?? 0);
	const surfaces: Record<string, unknown>[] = [];
	for (let i = 0; i < Math.min(count, MAX_SURFACES); i++) {
		const last = i === count - 1;
		const s: Record<string, unknown> = { radiusMm: toNumber(form.get(`surfaces.${i}.radiusMm`)) };
		if (!last) {
			s.thicknessMm = toNumber(form.get(`surfaces.${i}.thicknessMm`));
			s.material = toText(form.get(`surfaces.${i}.material`));
		}
		surfaces.push(s);
	}
	input.surfaces = surfaces;
	return input;
}

const isPrice = (k: string) => Object.hasOwn(PART_FIELD, k) && (PART_FIELD as Record<string, PartFieldSpec>)[k].unit === 'currency';

/** A stored part as the part form's string values (the price with two decimals). */
export function partFormValues(input: {
	[k: string]: unknown;
	surfaces: { radiusMm: number | null; thicknessMm?: number | null; material?: string | null }[];
}): Record<string, string> {
	const out: Record<string, string> = {};
	for (const [k, v] of Object.entries(input)) {
		if (k === 'surfaces' || v === null || v === undefined) continue;
		out[k] = isPrice(k) ? Number(v).toFixed(2) : String(v);
	}
	out.surfaceCount = String(input.surfaces.length);
	input.surfaces.forEach((s, i) => {
		out[`surfaces.${i}.radiusMm`] = s.radiusMm === null ? '' : String(s.radiusMm);
		out[`surfaces.${i}.thicknessMm`] = s.thicknessMm == null ? '' : String(s.thicknessMm);
		out[`surfaces.${i}.material`] = s.material ?? '';
	});
	return out;
}
