/**
 * The real-ray trace and the colour figures checked against published formulas, each written out
 * here (not taken from the product): the third-order longitudinal spherical aberration of a thin
 * plano-convex lens in both orientations, and the axial colour of a singlet.
 */
import { describe, expect, it } from 'vitest';
import { traceSystemFromLayout, axialCrossingMm, layoutMatrix, imageAfter, create, refractiveIndex, defaultColourBand, FDC_BAND_NM, type Layout } from '../../../src/lib/optics';
import { evaluatePlacement } from '../../../src/lib/server/solver/evaluate';
import { partElement, type CandidatePart } from '../../../src/lib/server/solver/elements';
import { element, singlet } from './helpers';

const LAMBDA = 587.6;

/**
 * Third-order longitudinal spherical aberration of a thin lens in air, stop at the lens, for a ray
 * at height h (F. A. Jenkins and H. E. White, Fundamentals of Optics, 4th ed. 1976, ch. 9, "thin-lens
 * spherical aberration" with Coddington's shape factor q and position factor p; from memory):
 *   1/s'ₕ − 1/s'ₚ = h²/(8f³) · 1/(n(n − 1)) · [ (n + 2)/(n − 1)·q² + 4(n + 1)pq + (3n + 2)(n − 1)p² + n³/(n − 1) ]
 * and LSA = s'ₚ − s'ₕ ≈ s'ₚ² (1/s'ₕ − 1/s'ₚ). For an object at infinity p = −1 and s'ₚ = f, so that
 * LSA = h²/(8 f n (n − 1)) · [ … ]; at n = 1.5 this is 7h²/(6f) with the curved side to the object
 * (q = +1) and 27h²/(6f) = 4.5h²/f with the flat side to it (q = −1) (from memory).
 */
function lsaCollimated(n: number, q: number, f: number, h: number): number {
	const p = -1;
	const bracket = ((n + 2) / (n - 1)) * q * q + 4 * (n + 1) * p * q + (3 * n + 2) * (n - 1) * p * p + (n * n * n) / (n - 1);
	return ((h * h) / (8 * f * n * (n - 1))) * bracket;
}

describe('Seidel longitudinal spherical aberration of a plano-convex lens (Jenkins & White, 4th ed. 1976, ch. 9; from memory)', () => {
	const n = refractiveIndex('517642', LAMBDA);
	const R = 51.7; // f ≈ R/(n − 1) ≈ 100 mm
	const h = 2; // ray height at the lens, mm (F/25: fifth order below 0.1 % of the third)
	// Thin: the centre thickness is the sag at 2.5 mm plus 0.02 mm, so that the edge stays glass.
	const t = R - Math.sqrt(R * R - 2.5 * 2.5) + 0.02;
	it.each([
		['curved side to the object (q = +1)', false, 1],
		['flat side to the object (q = −1)', true, -1]
	] as const)('%s: real rays from a distant point agree with the third-order formula', (_label, reversed, q) => {
		const e = element(singlet(R, null, t), LAMBDA, 2 * 12, reversed);
		const far = 1e7; // object 10 km away: the beam is collimated to 1e-5 in the position factor
		const base: Layout = { objectDistanceMm: far, elements: [e], gapsMm: [], backDistanceMm: 0 };
		const img = imageAfter(layoutMatrix(create(), base))!;
		const sys = traceSystemFromLayout({ ...base, backDistanceMm: img.imageDistanceMm });
		if (!sys.ok) throw sys.error;
		const f = -1 / e.matrix[2];
		const real = sys.value.imageZMm - axialCrossingMm(sys.value, h / far)!;
		const third = lsaCollimated(n, q, f, h);
		expect(real / third).toBeGreaterThan(0.98);
		expect(real / third).toBeLessThan(1.02);
	});
	it('the flat side to the object has 27/7 times the aberration of the curved side at n = 1.5 (same formula)', () => {
		expect(lsaCollimated(1.5, -1, 100, 2) / lsaCollimated(1.5, 1, 100, 2)).toBeCloseTo(27 / 7, 12);
		expect(lsaCollimated(1.5, 1, 100, 10)).toBeCloseTo((7 * 100) / 600, 12);
		expect(lsaCollimated(1.5, -1, 100, 10)).toBeCloseTo(4.5, 12);
	});
});

let nextId = 100;
function candidate(surfaces: { radiusMm: number | null; thicknessMm?: number; material?: string | null }[], diameterMm: number): CandidatePart {
	const id = nextId++;
	return {
		partId: id,
		sku: `PC-${id}`,
		name: `Published check ${id}`,
		kind: 'biconvex',
		diameterMm,
		clearApertureMm: null,
		surfaces,
		eflMm: null,
		bflMm: null,
		centerThicknessMm: null,
		designWavelengthNm: LAMBDA,
		measured: null,
		onHand: 1,
		available: 1,
		locations: []
	};
}

describe('axial colour of a singlet, (n_F − n_C)/(n_d − 1)·f (common practice, no source)', () => {
	it('the solution colour figure of a thin singlet imaging a distant object matches it to 2 %', () => {
		const part = candidate([{ radiusMm: 103.4, thicknessMm: 2.2, material: '517642' }, { radiusMm: -103.4 }], 25.4);
		const built = partElement(part, 587.6);
		if (!built.ok) throw new Error(built.reason);
		const e = built.element;
		const far = 1e7;
		const img = imageAfter(layoutMatrix(create(), { objectDistanceMm: far, elements: [e], gapsMm: [], backDistanceMm: 0 }))!;
		const ev = evaluatePlacement(
			{ parts: [part], elements: [e], objectDistanceMm: far, gapsMm: [], backDistanceMm: img.imageDistanceMm, targetMagnification: img.magnification, afocalFamily: false, doubleRoot: false, screenEstimateMm: 0 },
			{ wavelengthNm: 587.6, trackMm: far + e.thicknessMm + img.imageDistanceMm, objectNA: 1e-6, objectHeightMm: 0 },
			[true]
		);
		const [F, d, C] = FDC_BAND_NM;
		const nF = refractiveIndex('517642', F),
			nd = refractiveIndex('517642', d),
			nC = refractiveIndex('517642', C);
		const f = -1 / e.matrix[2];
		const expected = ((nF - nC) / (nd - 1)) * f; // the long (C) end focuses farther: positive
		expect(ev.solution.colour!.bandNm).toEqual([F, d, C]);
		// The formula is first order in the dispersion (exact for a thin lens: (n_d − 1)²/((n_F − 1)(n_C − 1)) ≈ 0.994 of
		// it here) and thin (the 2.2 mm of glass moves the back focus a little less): within 2 %, and a wrong band end or
		// sign would be off by far more.
		expect(ev.solution.colour!.axialColourMm! / expected).toBeGreaterThan(0.98);
		expect(ev.solution.colour!.axialColourMm! / expected).toBeLessThan(1.02);
		// f/V with the glass code's Abbe number 64.2: about 1.56 mm for f ≈ 100 mm.
		expect(ev.solution.colour!.axialColourMm!).toBeCloseTo(f / 64.2, 1);
	});
});

describe('the colour band (a rule of this product)', () => {
	it('is F–d–C for a wavelength inside it, and that band scaled to the wavelength outside it', () => {
		expect(defaultColourBand(632.8)).toEqual([486.1, 587.6, 656.3]);
		expect(defaultColourBand(587.6)).toEqual([486.1, 587.6, 656.3]);
		const nir = defaultColourBand(1064);
		expect(nir[1]).toBe(1064);
		expect(nir[0] / 1064).toBeCloseTo(486.1 / 587.6, 3);
		expect(nir[2] / 1064).toBeCloseTo(656.3 / 587.6, 3);
	});
});
