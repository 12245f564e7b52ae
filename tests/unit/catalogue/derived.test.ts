/**
 * Derived values of catalogue parts (`computeDerived`, `paraxialColumns`): prescription parts
 * against closed-form thick-lens results, black-box parts keep their datasheet EFL, and a
 * measured EFL rescales the model.
 */
import { describe, expect, it } from 'vitest';
import { computeDerived, paraxialColumns, type OpticsPart } from '../../../src/lib/server/catalogue/derived';
import { refractiveIndex } from '../../../src/lib/optics';

const D_LINE = 587.5618;
const HE_NE = 632.8;

function part(over: Partial<OpticsPart>): OpticsPart {
	return {
		surfaces: [],
		eflMm: null,
		bflMm: null,
		centerThicknessMm: null,
		designWavelengthNm: 587.6,
		diameterMm: 25.4,
		clearApertureMm: null,
		primaryMaterial: null,
		...over
	};
}

const planoConvex = (radiusMm: number, thicknessMm: number, material = '517642') =>
	part({ surfaces: [{ radiusMm, thicknessMm, material }, { radiusMm: null }], primaryMaterial: material });

function derivedOf(p: OpticsPart, wl = D_LINE, measured: { eflMm: number; wavelengthNm: number } | null = null) {
	const r = computeDerived(p, wl, measured);
	if (!r.ok) throw new Error(`${r.code}: ${r.message}`);
	return r.value;
}

describe('prescription parts (thick-lens formulas)', () => {
	// Thick lens in air: 1/f = (n − 1)[1/R1 − 1/R2 + (n − 1) d / (n R1 R2)]; with R2 = ∞ this is f = R1/(n − 1)
	// for any centre thickness d, and the rear principal plane sits d/n inside the flat face, so
	// BFL = f − d/n (Hecht, Optics, 5th ed. 2017, §6.2.1, eqs. 6.2–6.4, from memory).
	it.each([
		[51.7, 4, '517642'],
		[25.85, 9, '517642'],
		[103.4, 2.5, 'fused-silica'],
		[-60, 2, '785258']
	])('plano-convex/concave R = %s mm, d = %s mm, %s: EFL = R/(n − 1) exactly, BFL = f − d/n', (r, d, glass) => {
		const n = refractiveIndex(glass, D_LINE);
		const v = derivedOf(planoConvex(r, d, glass));
		expect(v.source).toBe('prescription');
		expect(v.model).toBe('prescription');
		expect(v.eflMm).toBeCloseTo(r / (n - 1), 9);
		expect(v.bflMm!).toBeCloseTo(r / (n - 1) - d / n, 9);
		// The ABCD matrix of a lens in air has determinant 1 (reduced form; Hecht §6.2.1, from memory).
		const [A, B, C, D] = v.abcd!;
		expect(A * D - B * C).toBeCloseTo(1, 12);
		expect(-1 / C).toBeCloseTo(v.eflMm, 9);
	});

	it('plano-convex reversed (flat side first) has the same EFL and BFL = f (rear plane at the curved vertex)', () => {
		const n = refractiveIndex('517642', D_LINE);
		const v = derivedOf(part({ surfaces: [{ radiusMm: null, thicknessMm: 4, material: '517642' }, { radiusMm: -51.7 }] }));
		expect(v.eflMm).toBeCloseTo(51.7 / (n - 1), 9);
		expect(v.bflMm!).toBeCloseTo(51.7 / (n - 1), 9);
	});

	it('a thick biconvex lens follows the full thick-lens formula, not the thin-lens one', () => {
		const [r1, r2, d] = [40, -60, 12];
		const n = refractiveIndex('589613', D_LINE);
		const thick = 1 / ((n - 1) * (1 / r1 - 1 / r2 + ((n - 1) * d) / (n * r1 * r2)));
		const thin = 1 / ((n - 1) * (1 / r1 - 1 / r2));
		const v = derivedOf(part({ surfaces: [{ radiusMm: r1, thicknessMm: d, material: '589613' }, { radiusMm: r2 }] }));
		expect(v.eflMm).toBeCloseTo(thick, 9);
		expect(Math.abs(v.eflMm - thin)).toBeGreaterThan(1); // the thickness matters at this d
	});

	it('the EFL follows the glass dispersion: shorter at the F line than at the C line for a positive crown lens', () => {
		const p = planoConvex(51.7, 4);
		const f = derivedOf(p, 486.1327).eflMm;
		const c = derivedOf(p, 656.2725).eflMm;
		expect(f).toBeLessThan(c);
		// f ∝ 1/(n − 1) for a plano-convex lens, so the ratio is exact.
		expect(c / f).toBeCloseTo((refractiveIndex('517642', 486.1327) - 1) / (refractiveIndex('517642', 656.2725) - 1), 9);
	});

	it('paraxialColumns stores the EFL at the default wavelength, rounded to 1 nm, from the prescription', () => {
		const n = refractiveIndex('517642', 587.6);
		expect(paraxialColumns(planoConvex(51.7, 4), 587.6, null)).toEqual({
			paraxialEflMm: Math.round((51.7 / (n - 1)) * 1e6) / 1e6,
			eflSource: 'prescription'
		});
	});
});

describe('black-box parts (datasheet numbers, no surfaces)', () => {
	it('keep their datasheet EFL and BFL at the design wavelength', () => {
		const p = part({ kind: 'other', eflMm: 150, bflMm: 146.2, centerThicknessMm: 5.5, primaryMaterial: '517642', designWavelengthNm: 587.6 } as Partial<OpticsPart>);
		const v = derivedOf(p, 587.6);
		expect(v.model).toBe('black-box');
		expect(v.source).toBe('nominal');
		expect(v.eflMm).toBeCloseTo(150, 9);
		expect(v.bflMm!).toBeCloseTo(146.2, 9);
		expect(paraxialColumns(p, 587.6, null)).toEqual({ paraxialEflMm: 150, eflSource: 'nominal' });
	});

	it('with a material, move with its dispersion as (n(λd) − 1)/(n(λ) − 1), the thin-lens law', () => {
		const p = part({ eflMm: 150, bflMm: 146.2, centerThicknessMm: 5.5, primaryMaterial: '517642', designWavelengthNm: 587.6 });
		const ratio = (refractiveIndex('517642', 587.6) - 1) / (refractiveIndex('517642', 1064) - 1);
		expect(derivedOf(p, 1064).eflMm).toBeCloseTo(150 * ratio, 9);
	});

	it('with only an EFL, keep that number at any wavelength', () => {
		const p = part({ eflMm: -75 });
		for (const wl of [405, 587.6, 1550]) {
			const v = derivedOf(p, wl);
			expect(v.model).toBe('nominal-only');
			expect(v.eflMm).toBe(-75);
			expect(v.abcd).toBeNull();
		}
		expect(paraxialColumns(p, 587.6, null)).toEqual({ paraxialEflMm: -75, eflSource: 'nominal' });
	});

	it('without surfaces or an EFL there is nothing to compute', () => {
		const r = computeDerived(part({}), 587.6);
		expect(r).toMatchObject({ ok: false, code: 'no-prescription' });
		expect(paraxialColumns(part({}), 587.6, null)).toEqual({ paraxialEflMm: null, eflSource: null });
	});
});

describe('measured EFL', () => {
	it('a prescription part rescaled to a measurement has exactly the measured EFL at the measured wavelength', () => {
		const p = planoConvex(51.7, 4);
		const v = derivedOf(p, HE_NE, { eflMm: 97.5, wavelengthNm: HE_NE });
		expect(v.source).toBe('measured');
		expect(v.eflMm).toBeCloseTo(97.5, 9);
		expect(v.curvatureScale).not.toBe(1);
	});

	it('and at the default wavelength scales by the dispersion (exact for a plano-convex lens: f ∝ R/(n − 1))', () => {
		const p = planoConvex(51.7, 4);
		const ratio = (refractiveIndex('517642', HE_NE) - 1) / (refractiveIndex('517642', 587.6) - 1);
		const cols = paraxialColumns(p, 587.6, { eflMm: 97.5, wavelengthNm: HE_NE });
		expect(cols.eflSource).toBe('measured');
		expect(cols.paraxialEflMm!).toBeCloseTo(97.5 * ratio, 5);
	});

	it('a black-box part takes the measured EFL at the measured wavelength', () => {
		const p = part({ eflMm: 150, bflMm: 146.2, centerThicknessMm: 5.5, primaryMaterial: '517642', designWavelengthNm: 587.6 });
		expect(derivedOf(p, 532, { eflMm: 151.2, wavelengthNm: 532 }).eflMm).toBeCloseTo(151.2, 9);
		// EFL-only parts take the measurement as it stands.
		expect(derivedOf(part({ eflMm: 40 }), 587.6, { eflMm: 40.4, wavelengthNm: 632.8 }).eflMm).toBe(40.4);
	});

	it('a measurement of the opposite sign is refused, and the stored column keeps the measured number', () => {
		const p = planoConvex(51.7, 4);
		expect(computeDerived(p, 587.6, { eflMm: -100, wavelengthNm: 587.6 }).ok).toBe(false);
		expect(paraxialColumns(p, 587.6, { eflMm: -100, wavelengthNm: 587.6 })).toEqual({ paraxialEflMm: -100, eflSource: 'measured' });
	});
});
