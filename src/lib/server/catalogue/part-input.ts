/**
 * Validation of part input (API bodies, the part form, CSV import rows): one zod schema
 * with the surfaces, checked against the optics core so a stored prescription always
 * builds into a lens. Field messages are keyed by dotted path (`surfaces.1.radiusMm`).
 * The fields, their defaults, text lengths and who may edit them come from the descriptor
 * (`$lib/catalogue/part-fields`); this module adds each field's checks and messages.
 */
import { z } from 'zod';
import { text } from '$lib/input';
import { isWholeCents } from '$lib/money';
import { buildElement, resolveMaterial, thicknessesAtHeight } from '$lib/optics';
import { toSurfaceSpecs } from './derived';
import { parseCoatingBand } from '$lib/coating';
import { MAX_SURFACES, PART_FIELD, PART_FIELDS, PART_KINDS, type DefaultedPartField, type PartFieldName } from '$lib/catalogue/part-fields';
import { PURCHASING_FIELDS_ONLY } from '$lib/roles';

const optionalNumber = (schema: z.ZodNumber) => schema.nullable().optional();
const optionalText = (max: number) =>
	text()
		.trim()
		.max(max, `At most ${max} characters.`)
		.transform((s) => (s === '' ? null : s))
		.nullable()
		.optional();

/** One surface; `thicknessMm` and `material` describe the medium after it (none on the last). */
export const surfaceInputSchema = z
	.object({
		radiusMm: z
			.number({ error: 'Enter the radius in mm, or leave it empty for a flat surface.' })
			.refine((v) => v !== 0, 'A radius cannot be 0: leave it empty for a flat surface.')
			.refine((v) => Math.abs(v) <= 1e7, 'That radius is too large: leave it empty for a flat surface.')
			.nullable(),
		thicknessMm: optionalNumber(z.number({ error: 'Enter a thickness in mm.' }).min(0, 'The thickness cannot be negative.').max(1000)),
		material: optionalText(32)
	})
	.strict();

/** Fields a purchaser may change (see `assertPatchAllowed`): those the descriptor lets purchasers edit. */
export const PURCHASING_FIELDS: readonly PartFieldName[] = PART_FIELDS.filter((f) => PURCHASING_FIELDS_ONLY.every((r) => f.editors.includes(r))).map((f) => f.name);

/** The longest text of a field (the descriptor's `maxLength`). */
const maxOf = (name: keyof typeof PART_FIELD) => (PART_FIELD[name] as { maxLength: number }).maxLength;

const fields = {
	sku: text()
		.trim()
		.min(1, 'Enter a SKU.')
		.max(maxOf('sku'), `At most ${maxOf('sku')} characters.`)
		.regex(/^[A-Za-z0-9][A-Za-z0-9._/-]*$/, 'Use letters, digits and . _ / - only, starting with a letter or digit.'),
	name: text()
		.trim()
		.min(1, 'Enter a name.')
		.max(maxOf('name'), `At most ${maxOf('name')} characters.`),
	kind: z.enum(PART_KINDS, { error: 'Choose a kind.' }),
	diameterMm: z.number({ error: 'Enter the diameter in mm.' }).positive('The diameter must be more than 0 mm.').max(1000),
	clearApertureMm: optionalNumber(z.number().positive('The clear aperture must be more than 0 mm.').max(1000)),
	surfaces: z.array(surfaceInputSchema).max(MAX_SURFACES, `At most ${MAX_SURFACES} surfaces.`),
	eflMm: optionalNumber(z.number().refine((v) => v !== 0 && Math.abs(v) <= 1e6, 'Enter a non-zero EFL in mm.')),
	bflMm: optionalNumber(z.number().min(-1e6).max(1e6)),
	centerThicknessMm: optionalNumber(z.number().min(0, 'The thickness cannot be negative.').max(1000)),
	designWavelengthNm: z.number().min(200, 'Between 200 and 20000 nm.').max(20000, 'Between 200 and 20000 nm.'),
	coating: optionalText(maxOf('coating')),
	supplier: optionalText(maxOf('supplier')),
	supplierPartNumber: optionalText(maxOf('supplierPartNumber')),
	/** Unit price in currency units of `currency` (38.50), at most two decimals; stored as cents. */
	unitPrice: optionalNumber(
		z
			.number({ error: 'Enter the price in currency units, e.g. 38.50.' })
			.min(0, 'The price cannot be negative.')
			.max(1e7, 'At most 10000000.')
			.refine(isWholeCents, 'At most two decimals, e.g. 38.50.')
	),
	currency: text()
		.trim()
		.regex(/^[A-Z]{3}$/, 'Three capital letters (ISO 4217), e.g. EUR.'),
	leadTimeDays: optionalNumber(z.number().int('Whole days.').min(0).max(3650)),
	reorderPoint: z.number().int('A whole number.').min(0).max(1e6),
	reorderQuantity: z.number().int('A whole number.').min(0).max(1e6),
	notes: optionalText(maxOf('notes'))
} satisfies Record<PartFieldName, z.ZodType>;

type Fields = typeof fields;
/** The fields with the descriptor's defaults applied (a field left out takes its default). */
function withDefaults(f: Fields) {
	const out: Record<string, z.ZodType> = {};
	for (const { name, default: d } of PART_FIELDS) out[name] = d === undefined ? f[name] : (f[name] as z.ZodType).default(d as never);
	return out as { [K in PartFieldName]: K extends DefaultedPartField ? z.ZodDefault<Fields[K]> : Fields[K] };
}

/** The fields of a part as the API and the form take them (Part JSON without computed fields). */
export const partFieldsSchema = z.object(withDefaults(fields)).strict();

export type PartFields = z.infer<typeof partFieldsSchema>;

/** Cross-field and optics checks of a whole part; adds issues at the field they concern. */
export function checkPart(p: PartFields, ctx: { addIssue: (i: { code: 'custom'; message: string; path: (string | number)[] }) => void }) {
	const issue = (path: (string | number)[], message: string) => ctx.addIssue({ code: 'custom', message, path });
	const coating = parseCoatingBand(p.coating);
	if (!coating.ok) issue(['coating'], coating.message);
	if (p.clearApertureMm != null && p.clearApertureMm > p.diameterMm) {
		issue(['clearApertureMm'], 'The clear aperture cannot exceed the diameter.');
	}
	const s = p.surfaces;
	if (s.length === 0) {
		if (p.eflMm == null) issue(['eflMm'], 'A part without surfaces needs its datasheet EFL.');
		return;
	}
	if (s.length === 1) {
		issue(['surfaces'], 'A lens has at least two surfaces.');
		return;
	}
	let bad = false;
	s.forEach((surface, i) => {
		const last = i === s.length - 1;
		if (last) {
			if (surface.thicknessMm != null && surface.thicknessMm !== 0) {
				issue(['surfaces', i, 'thicknessMm'], 'The last surface has no thickness after it.');
				bad = true;
			}
			if (surface.material) {
				issue(['surfaces', i, 'material'], 'The last surface has no material after it.');
				bad = true;
			}
			return;
		}
		if (surface.thicknessMm == null) {
			issue(['surfaces', i, 'thicknessMm'], 'Enter the thickness after this surface.');
			bad = true;
		}
		if (surface.material) {
			try {
				resolveMaterial(surface.material);
			} catch {
				issue(['surfaces', i, 'material'], `Unknown material "${surface.material}": use a six-digit glass code or a listed material.`);
				bad = true;
			}
		}
		if (surface.radiusMm !== null && Math.abs(surface.radiusMm) < p.diameterMm / 2) {
			issue(['surfaces', i, 'radiusMm'], `A sphere of radius ${Math.abs(surface.radiusMm)} mm cannot span a ${p.diameterMm} mm diameter.`);
			bad = true;
		}
	});
	const last = s[s.length - 1];
	if (last.radiusMm !== null && Math.abs(last.radiusMm) < p.diameterMm / 2) {
		issue(['surfaces', s.length - 1, 'radiusMm'], `A sphere of radius ${Math.abs(last.radiusMm)} mm cannot span a ${p.diameterMm} mm diameter.`);
		bad = true;
	}
	if (bad) return;
	const built = buildElement(toSurfaceSpecs(s), p.designWavelengthNm, { clearApertureMm: p.clearApertureMm ?? null });
	if (!built.ok) {
		issue(['surfaces'], built.error.message);
		return;
	}
	const edges = thicknessesAtHeight(built.value, p.diameterMm / 2);
	edges?.forEach((t, i) => {
		if (t < 0) {
			issue(['surfaces', i, 'thicknessMm'], `Surfaces ${i + 1} and ${i + 2} cross before the rim (edge thickness ${t.toFixed(2)} mm).`);
		}
	});
}

/** A whole part: fields plus the optics checks. */
export const partInputSchema = partFieldsSchema.superRefine(checkPart);
export type PartInput = z.infer<typeof partInputSchema>;

/** A PATCH body: any subset of the fields (checked as a whole after merging with the stored part). */
export const partPatchSchema = z.object(fields).partial().strict();
export type PartPatch = z.infer<typeof partPatchSchema>;

/** The surfaces in the optics core's shape: one definition, in derived.ts. */
export { toSurfaceSpecs };
