/**
 * Materials the lab adds from a supplier's datasheet: a Sellmeier or Cauchy formula, the wavelength
 * range the datasheet gives for it and where the numbers come from. Stored in `materials` (with
 * `coefficients`), registered in the optics core with `setLabMaterials` so that parts, the catalogue's
 * EFL and the solver use them like the built-in ones.
 *
 * Only admins add them (the lab's own data; the product ships only the open materials of the optics
 * core). Rows are never edited or deleted: a part refers to a material by its code, and changing a
 * formula under stored parts would change their optics without a trace. A corrected datasheet is a
 * new code.
 *
 * Every instance reads the table before it uses materials (`syncLabMaterials`: one small query), so
 * a material added through one instance is known to all.
 */
import { asc, eq, isNotNull } from 'drizzle-orm';
import { z } from 'zod';
import type { DbOrTx } from '$lib/server/db';
import { materials } from '$lib/server/db/schema';
import { DomainError } from '$lib/server/errors';
import { recordAudit } from '$lib/server/audit';
import { changeStock } from '$lib/server/stock/version';
import { text } from '$lib/input';
import {
	dispersionProblem,
	isOpenMaterialName,
	labMaterialModel,
	openMaterialSpecs,
	parseGlassCode,
	setLabMaterials,
	WAVELENGTH_C_NM,
	WAVELENGTH_D_NM,
	WAVELENGTH_F_NM,
	type LabMaterialSpec
} from '$lib/optics';

/** Range a lab material's formula may claim, nm. */
export const LAB_MATERIAL_RANGE_NM: readonly [number, number] = [150, 20_000];

const coefficient = (label: string) => z.number({ error: `${label} must be a number.` }).refine(Number.isFinite, `${label} must be a finite number.`);

const common = {
	code: text()
		.trim()
		.toLowerCase()
		.regex(/^[a-z][a-z0-9-]{1,31}$/, 'A code of 2 to 32 letters, digits and dashes, starting with a letter (e.g. "tw-silicon-2026").')
		.refine((c) => !isOpenMaterialName(c), 'That code names a built-in open material: choose another.')
		.refine((c) => parseGlassCode(c) === null, 'A six-digit code is a glass code: choose another.'),
	name: text().trim().min(1, 'Enter a name.').max(120, 'At most 120 characters.'),
	minNm: coefficient('The lowest wavelength').pipe(
		z.number().min(LAB_MATERIAL_RANGE_NM[0], `At least ${LAB_MATERIAL_RANGE_NM[0]} nm.`).max(LAB_MATERIAL_RANGE_NM[1], `At most ${LAB_MATERIAL_RANGE_NM[1]} nm.`)
	),
	maxNm: coefficient('The highest wavelength').pipe(
		z.number().min(LAB_MATERIAL_RANGE_NM[0], `At least ${LAB_MATERIAL_RANGE_NM[0]} nm.`).max(LAB_MATERIAL_RANGE_NM[1], `At most ${LAB_MATERIAL_RANGE_NM[1]} nm.`)
	),
	source: text()
		.trim()
		.min(10, 'Say where the coefficients come from: the supplier, the datasheet and its date or edition.')
		.max(2000, 'At most 2000 characters.')
};

/** A new lab material, as the API and the admin form take it. */
export const labMaterialInputSchema = z
	.discriminatedUnion(
		'formula',
		[
			z
				.object({
					formula: z.literal('sellmeier'),
					...common,
					b: z.array(coefficient('Each B'), { error: 'b must be a list of numbers.' }).min(1, 'Give 1 to 6 B coefficients.').max(6, 'Give 1 to 6 B coefficients.'),
					c: z.array(coefficient('Each C'), { error: 'c must be a list of numbers.' }).min(1, 'Give 1 to 6 C coefficients (µm²).').max(6, 'Give 1 to 6 C coefficients (µm²).')
				})
				.strict(),
			z
				.object({
					formula: z.literal('cauchy'),
					...common,
					terms: z.array(coefficient('Each term'), { error: 'terms must be a list of numbers.' }).min(2, 'Give 2 to 5 terms: A, B, C, …').max(5, 'Give 2 to 5 terms: A, B, C, …')
				})
				.strict()
		],
		{ error: (iss) => (iss.code === 'invalid_union' ? 'The formula must be "sellmeier" or "cauchy".' : undefined) }
	)
	.superRefine((m, ctx) => {
		if (!(m.maxNm > m.minNm)) {
			ctx.addIssue({ code: 'custom', path: ['maxNm'], message: 'The highest wavelength must lie above the lowest.' });
			return;
		}
		if (m.formula === 'sellmeier' && m.b.length !== m.c.length) {
			ctx.addIssue({ code: 'custom', path: ['c'], message: `Give as many C as B coefficients (${m.b.length}).` });
			return;
		}
		const problem = dispersionProblem(m);
		if (problem) ctx.addIssue({ code: 'custom', path: [m.formula === 'sellmeier' ? 'c' : 'terms'], message: problem });
	});

export type LabMaterialInput = z.infer<typeof labMaterialInputSchema>;

/** A material as the API lists it. */
export interface MaterialJson {
	code: string;
	name: string;
	/** 'open': built into the optics core from the literature; 'lab': added by the lab; 'glass-code': a glass code the lab lists. */
	origin: 'open' | 'lab' | 'glass-code';
	formula: 'sellmeier' | 'cauchy' | 'glass-code';
	/** Sellmeier: { b, c } (c in µm²); Cauchy: { terms }; glass code: { nd, vd }. */
	coefficients: { b: number[]; c: number[] } | { terms: number[] } | { nd: number; vd: number };
	minNm: number;
	maxNm: number;
	source: string;
	/** nd and vd from the formula, null when its range leaves out the d, F or C line. */
	nd: number | null;
	vd: number | null;
}

function specOf(row: typeof materials.$inferSelect): LabMaterialSpec | null {
	const c = row.coefficients as { b?: unknown; c?: unknown; terms?: unknown } | null;
	if (!c || row.minNm === null || row.maxNm === null) return null;
	const nums = (x: unknown) => (Array.isArray(x) && x.every((v) => typeof v === 'number') ? (x as number[]) : null);
	const base = { code: row.code, name: row.name, minNm: row.minNm, maxNm: row.maxNm, source: row.source ?? '' };
	if (row.model === 'sellmeier' && nums(c.b) && nums(c.c)) return { ...base, formula: 'sellmeier', b: nums(c.b)!, c: nums(c.c)! };
	if (row.model === 'cauchy' && nums(c.terms)) return { ...base, formula: 'cauchy', terms: nums(c.terms)! };
	return null;
}

/** nd and vd of a formula when its range covers F, d and C. */
function abbeOf(spec: LabMaterialSpec): { nd: number | null; vd: number | null } {
	if (spec.minNm > WAVELENGTH_F_NM || spec.maxNm < WAVELENGTH_C_NM) return { nd: null, vd: null };
	const m = labMaterialModel(spec);
	const nd = m.indexUnchecked(WAVELENGTH_D_NM);
	return { nd, vd: (nd - 1) / (m.indexUnchecked(WAVELENGTH_F_NM) - m.indexUnchecked(WAVELENGTH_C_NM)) };
}

/** Reads the lab materials from the table and registers them in the optics core; returns them. */
export async function syncLabMaterials(db: DbOrTx): Promise<LabMaterialSpec[]> {
	const rows = await db.select().from(materials).where(isNotNull(materials.coefficients)).orderBy(asc(materials.code));
	const specs = rows.map(specOf).filter((s): s is LabMaterialSpec => s !== null);
	setLabMaterials(specs);
	return specs;
}

/** Every material: the open ones of the optics core, the lab's own, and the glass codes the lab lists. */
export async function listAllMaterials(db: DbOrTx): Promise<MaterialJson[]> {
	const rows = await db.select().from(materials).orderBy(asc(materials.code));
	const lab = rows.map(specOf).filter((s): s is LabMaterialSpec => s !== null);
	setLabMaterials(lab);
	const json = (spec: LabMaterialSpec, origin: 'open' | 'lab'): MaterialJson => ({
		code: spec.code,
		name: origin === 'open' ? (rows.find((r) => r.code === spec.code)?.name ?? spec.name) : spec.name,
		origin,
		formula: spec.formula,
		coefficients: spec.formula === 'sellmeier' ? { b: spec.b, c: spec.c } : { terms: spec.terms },
		minNm: spec.minNm,
		maxNm: spec.maxNm,
		source: spec.source,
		...abbeOf(spec)
	});
	const open = openMaterialSpecs().map((s) => json(s, 'open'));
	const codes = rows
		.filter((r) => r.model === 'glass-code' && r.nd !== null && r.vd !== null)
		.map(
			(r): MaterialJson => ({
				code: r.code,
				name: r.name,
				origin: 'glass-code',
				formula: 'glass-code',
				coefficients: { nd: r.nd!, vd: r.vd! },
				minNm: 365,
				maxNm: 1100,
				source: `Glass code ${r.code}: two-term Cauchy fit to nd and vd (optics core, glassCodeModel).`,
				nd: r.nd,
				vd: r.vd
			})
		);
	return [...open, ...lab.map((s) => json(s, 'lab')), ...codes];
}

/** Adds a lab material (409 when the code is taken); registers it at once. */
export async function createLabMaterial(db: DbOrTx, body: unknown, actor: { id: number }): Promise<MaterialJson> {
	const input = labMaterialInputSchema.parse(body);
	const spec: LabMaterialSpec =
		input.formula === 'sellmeier'
			? { code: input.code, name: input.name, formula: 'sellmeier', b: input.b, c: input.c, minNm: input.minNm, maxNm: input.maxNm, source: input.source }
			: { code: input.code, name: input.name, formula: 'cauchy', terms: input.terms, minNm: input.minNm, maxNm: input.maxNm, source: input.source };
	const abbe = abbeOf(spec);
	// The solver's cached element snapshots are keyed by the stock version: changeStock bumps it.
	await changeStock(db, async (tx) => {
		const [dup] = await tx.select({ id: materials.id }).from(materials).where(eq(materials.code, spec.code)).limit(1);
		if (dup) throw new DomainError(409, 'duplicate-code', `There is already a material ${spec.code}.`, { code: 'This code is already in use.' });
		const [{ id }] = await tx
			.insert(materials)
			.values({
				code: spec.code,
				name: spec.name,
				model: spec.formula,
				nd: abbe.nd,
				vd: abbe.vd,
				coefficients: spec.formula === 'sellmeier' ? { b: spec.b, c: spec.c } : { terms: spec.terms },
				minNm: spec.minNm,
				maxNm: spec.maxNm,
				source: spec.source,
				createdBy: actor.id
			})
			.$returningId();
		await recordAudit(tx, { actorId: actor.id, action: 'material.create', targetType: 'material', targetId: id, detail: { code: spec.code, formula: spec.formula } });
	});
	await syncLabMaterials(db);
	return {
		code: spec.code,
		name: spec.name,
		origin: 'lab',
		formula: spec.formula,
		coefficients: spec.formula === 'sellmeier' ? { b: spec.b, c: spec.c } : { terms: spec.terms },
		minNm: spec.minNm,
		maxNm: spec.maxNm,
		source: spec.source,
		...abbe
	};
}
