/**
 * The kind templates of the part form (`surfaceTemplate`): each gives a prescription that the
 * catalogue's own input schema accepts, with an EFL close to the one asked for.
 *
 * The templates use the thin-lens lensmaker's equation 1/f = (n − 1)(1/R1 − 1/R2) (Hecht, Optics,
 * 5th ed. 2017, §5.2.3, from memory) and add the centre thickness afterwards, so the thick lens
 * misses the target by the thickness term (n − 1)² d / (n R1 R2) of the thick-lens formula (§6.2.1,
 * from memory) and by the 0.01 mm rounding of the radii. For biconvex and biconcave lenses of the
 * usual stock shapes (f ≥ 2 × the diameter) that is under 3 %; plano lenses have no thickness term,
 * and the meniscus templates scale their radii to the thick-lens EFL (the thin-lens radii missed by
 * up to 10 % at f = 2 × the diameter), so those hit the target to the rounding (0.1 %). The
 * doublet's power split is the thin-lens achromat condition and also lands within 3 %.
 */
import { describe, expect, it } from 'vitest';
import { surfaceTemplate } from '../../../src/lib/components/part-templates';
import { partInputSchema } from '../../../src/lib/server/catalogue/part-input';
import { computeDerived } from '../../../src/lib/server/catalogue/derived';
import { toSurfaceSpecs } from '../../../src/lib/server/catalogue/part-input';

const D_LINE = 587.5618;
const KINDS = ['plano-convex', 'biconvex', 'plano-concave', 'biconcave', 'positive-meniscus', 'negative-meniscus', 'achromatic-doublet'] as const;
const DIVERGING = new Set(['plano-concave', 'biconcave', 'negative-meniscus']);
/** Kinds that hit the target to the rounding of the radii: plano lenses (no thickness term) and menisci (radii scaled to the thick EFL). */
const EXACT = new Set(['plano-convex', 'plano-concave', 'positive-meniscus', 'negative-meniscus']);

const cases: [string, number, number][] = [];
for (const kind of KINDS) for (const d of [12.7, 25.4, 50.8]) for (const f of [2, 4, 10].map((k) => k * d)) cases.push([kind, d, f]);

describe('kind templates of the part form', () => {
	it.each(cases)('%s, Ø %s mm, f %s mm: a valid part whose EFL matches', (kind, diameterMm, f) => {
		const surfaces = surfaceTemplate(kind, { eflMm: f, diameterMm })!;
		expect(surfaces).not.toBeNull();
		const input = partInputSchema.safeParse({ sku: 'TPL-1', name: `Template ${kind}`, kind, diameterMm, surfaces });
		if (!input.success) throw new Error(JSON.stringify(input.error.issues));
		const r = computeDerived(
			{
				surfaces: toSurfaceSpecs(input.data.surfaces),
				eflMm: null,
				bflMm: null,
				centerThicknessMm: null,
				designWavelengthNm: 587.6,
				diameterMm,
				clearApertureMm: null,
				primaryMaterial: '517642'
			},
			D_LINE
		);
		if (!r.ok) throw new Error(r.message);
		const target = DIVERGING.has(kind) ? -f : f;
		const tolerance = EXACT.has(kind) ? 0.001 : 0.03;
		expect(Math.sign(r.value.eflMm)).toBe(Math.sign(target));
		expect(Math.abs(r.value.eflMm / target - 1)).toBeLessThan(tolerance);
	});

	it('forces the sign of the EFL to suit the kind', () => {
		const pos = surfaceTemplate('biconvex', { eflMm: -100, diameterMm: 25.4 })!;
		const neg = surfaceTemplate('biconcave', { eflMm: 100, diameterMm: 25.4 })!;
		expect(pos[0].radiusMm!).toBeGreaterThan(0);
		expect(neg[0].radiusMm!).toBeLessThan(0);
	});

	it('the achromatic doublet has less colour than a singlet of the same focal length', () => {
		const efl = (surfaces: ReturnType<typeof surfaceTemplate>, wl: number) => {
			const r = computeDerived(
				{ surfaces: toSurfaceSpecs(surfaces!), eflMm: null, bflMm: null, centerThicknessMm: null, designWavelengthNm: 587.6, diameterMm: 25.4, clearApertureMm: null, primaryMaterial: null },
				wl
			);
			if (!r.ok) throw new Error(r.message);
			return r.value.eflMm;
		};
		const doublet = surfaceTemplate('achromatic-doublet', { eflMm: 100, diameterMm: 25.4 });
		const singlet = surfaceTemplate('biconvex', { eflMm: 100, diameterMm: 25.4 });
		// Longitudinal colour between the F and C lines (486.1 and 656.3 nm).
		const colour = (s: typeof doublet) => Math.abs(efl(s, 486.1327) - efl(s, 656.2725));
		expect(colour(doublet)).toBeLessThan(colour(singlet) / 5);
	});

	/**
	 * The doublet's radii come from the chosen glasses' own dispersion: the thin-lens achromat condition
	 * φ1/V1 + φ2/V2 = 0 (Hecht, Optics, 5th ed. 2017, §6.3.2; Smith, Modern Optical Engineering, 4th ed.
	 * 2008, §13.1; both from memory), V from the material model, then the split corrected for thickness.
	 * The focal shift between F and C is the back focus at F minus at C. Before, the template used the
	 * Abbe numbers of 517642/620364 whatever glasses were chosen: +1.15 mm for 589613/785257.
	 */
	it.each([
		['589613', '785257', 100, 25.4],
		['517642', '620364', 100, 25.4],
		['589613', '785257', 50, 12.7],
		['517642', '785257', 200, 50.8]
	] as const)('achromatic doublet %s/%s, f %s mm, Ø %s mm: F–C focal shift near zero', (crown, flint, f, diameterMm) => {
		const s = surfaceTemplate('achromatic-doublet', { eflMm: f, diameterMm, material: crown, flint })!;
		expect(s.map((x) => x.material)).toEqual([crown, flint, null]);
		const derived = (wl: number) => {
			const r = computeDerived(
				{ surfaces: toSurfaceSpecs(s), eflMm: null, bflMm: null, centerThicknessMm: null, designWavelengthNm: 587.6, diameterMm, clearApertureMm: null, primaryMaterial: null },
				wl
			);
			if (!r.ok) throw new Error(r.message);
			return r.value;
		};
		const shift = derived(486.1327).bflMm! - derived(656.2725).bflMm!;
		// 0.01 mm of radius rounding moves it by a few µm; a singlet of this f shifts by about f/V ≈ 1.6–4 mm.
		expect(Math.abs(shift)).toBeLessThan(0.005 * (f / 100));
		expect(Math.abs(derived(587.5618).eflMm / f - 1)).toBeLessThan(0.002);
		const input = partInputSchema.safeParse({ sku: 'TPL-2', name: 'Template doublet', kind: 'achromatic-doublet', diameterMm, surfaces: s });
		expect(input.success).toBe(true);
	});

	it("has no template for 'other'", () => {
		expect(surfaceTemplate('other', { eflMm: 100, diameterMm: 25.4 })).toBeNull();
	});
});
