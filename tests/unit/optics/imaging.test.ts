import { describe, expect, it } from 'vitest';
import {
	placeSingle,
	placePair,
	placementLayout,
	layoutMatrix,
	trackLengthMm,
	blackBoxElement,
	cardinalPoints,
	create,
	approxEqual,
	packElements,
	solvePairKernel,
	checkPairPhysical,
	checkSinglePhysical,
	minAirGapMm,
	sagMm,
	ROOT_STRIDE,
	ROOT_FLAGS,
	ROOT_NON_PHYSICAL,
	PHYS_SURFACES_TOUCH,
	PHYS_OBJECT_PLANE,
	PHYS_GAP,
	PHYS_OBJECT_DISTANCE,
	type ThickElement,
	type Placement
} from '../../../src/lib/optics';
import { element, singlet, rng, uniform, randomSinglet, bruteForceGaps } from './helpers';

function thin(f: number): ThickElement {
	const r = blackBoxElement({ eflMm: f, bflMm: f, centerThicknessMm: 0 }, 550);
	if (!r.ok) throw r.error;
	return r.value;
}

/** Independent check of a placement: compose its full layout matrix from scratch. */
function expectImages(elements: ThickElement[], p: Placement, trackMm: number, m?: number) {
	const layout = placementLayout(elements, p);
	const M = layoutMatrix(create(), layout);
	expect(Math.abs(M[1])).toBeLessThan(1e-8 * trackMm);
	expect(approxEqual(M[0], p.magnification, 1e-9)).toBe(true);
	if (m !== undefined) expect(approxEqual(M[0], m, 1e-8)).toBe(true);
	expect(trackLengthMm(layout)).toBeCloseTo(trackMm, 8);
	expect(p.verified).toBe(true);
}

function placements(r: ReturnType<typeof placePair>): readonly Placement[] {
	return r.ok ? r.placements : [];
}

describe('single element', () => {
	it('thin lens: the two positions satisfy 1/s + 1/s′ = 1/f and have magnifications m and 1/m (Gaussian lens equation, Hecht 5th ed. §5.2.3)', () => {
		const f = 50,
			L = 300;
		const e = thin(f);
		const r = placeSingle(e, L);
		expect(r.ok).toBe(true);
		const ps = placements(r);
		expect(ps).toHaveLength(2);
		for (const p of ps) {
			expect(1 / p.objectDistanceMm + 1 / p.backDistanceMm).toBeCloseTo(1 / f, 12);
			expect(p.magnification).toBeCloseTo(-p.backDistanceMm / p.objectDistanceMm, 12);
			expectImages([e], p, L);
		}
		expect(ps[0].magnification * ps[1].magnification).toBeCloseTo(1, 12);
		// s = (L ± √(L² − 4fL))/2 in closed form
		const roots = [(L - Math.sqrt(L * L - 4 * f * L)) / 2, (L + Math.sqrt(L * L - 4 * f * L)) / 2];
		expect(ps.map((p) => p.objectDistanceMm).sort((a, b) => a - b)).toEqual(roots.map((x) => expect.closeTo(x, 10)));
	});

	it('thick lens at its minimum track 4f + hiatus: one double root at m = −1', () => {
		const e = element(singlet(51.5, -51.5, 4.2));
		const c = cardinalPoints(e.matrix)!;
		const hiatus = e.thicknessMm + c.backPrincipalMm - c.frontPrincipalMm;
		const L = 4 * c.eflMm + hiatus;
		const ps = placements(placeSingle(e, L));
		expect(ps).toHaveLength(1);
		expect(ps[0].double).toBe(true);
		expect(ps[0].magnification).toBeCloseTo(-1, 6);
		expectImages([e], ps[0], L);
	});

	it('below the minimum track there is no real root: a typed result, not NaN', () => {
		const r = placeSingle(thin(50), 199);
		expect(r).toMatchObject({ ok: false, reason: 'no-real-root' });
	});

	it('a negative lens only forms virtual images: its roots come back flagged', () => {
		const ps = placements(placeSingle(thin(-40), 100));
		expect(ps.length).toBeGreaterThan(0);
		for (const p of ps) expect(p.virtualObject || p.negativeBack).toBe(true);
	});
});

describe('pair kernel: closed form against an independent brute-force search', () => {
	it('random thick pairs, tracks and magnifications (seeded): same gaps, each verified by its full matrix', () => {
		const r = rng(20240611);
		let compared = 0;
		for (let trial = 0; trial < 300; trial++) {
			const e1 = element(randomSinglet(r).surfaces, 632.8);
			const e2 = element(randomSinglet(r).surfaces, 632.8);
			const L = uniform(r, 80, 900);
			let m = (r() < 0.5 ? -1 : 1) * Math.exp(uniform(r, -2, 2));
			if (Math.abs(Math.abs(m) - 1) < 0.05) m *= 1.3;
			const gMin = -50,
				gMax = L + 50;
			const brute = bruteForceGaps(e1, e2, L, m, gMin, gMax);
			const closed = placements(placePair(e1, e2, L, m));
			for (const p of closed) expectImages([e1, e2], p, L, m);
			const inRange = closed.filter((p) => p.gapMm! > gMin + 1 && p.gapMm! < gMax - 1);
			for (const g of brute) {
				expect(closed.some((p) => Math.abs(p.gapMm! - g) < 1e-6 * L)).toBe(true);
			}
			for (const p of inRange) {
				expect(brute.some((g) => Math.abs(p.gapMm! - g) < 1e-6 * L)).toBe(true);
			}
			compared += brute.length;
		}
		expect(compared).toBeGreaterThan(60); // the test really compared roots
	});

	it('m and 1/m give the same gaps with object and back distances swapped (equation depends on m + 1/m)', () => {
		const e1 = element(singlet(51.5, -51.5, 4.2)),
			e2 = element(singlet(38.6, null, 5.1));
		const a = placements(placePair(e1, e2, 400, -2.5));
		const b = placements(placePair(e1, e2, 400, -0.4));
		expect(a.length).toBe(2);
		expect(b.map((p) => p.gapMm)).toEqual(a.map((p) => expect.closeTo(p.gapMm!, 9)));
		// Not the same placements: m = −2.5 and m = −0.4 are conjugate, not equal.
		expect(a[0].objectDistanceMm).not.toBeCloseTo(b[0].objectDistanceMm, 3);
	});

	it('at m = −1 a sign-change scan misses roots the closed form finds (they touch the target, not cross it)', () => {
		const e1 = element(singlet(51.5, -51.5, 4.2)),
			e2 = element(singlet(38.6, null, 5.1));
		const L = 320;
		const closed = placements(placePair(e1, e2, L, -1));
		expect(closed.length).toBeGreaterThan(0);
		for (const p of closed) expectImages([e1, e2], p, L, -1);
		expect(bruteForceGaps(e1, e2, L, -1, -50, L + 50)).toHaveLength(0);
	});
});

describe('pair kernel: afocal pairs and double roots', () => {
	it('two equal lenses 2f apart at m = −1 over 4f: one family, not 0/0 (the 4f relay, common practice)', () => {
		const f = 50;
		const e = thin(f);
		const ps = placements(placePair(e, e, 4 * f, -1));
		expect(ps).toHaveLength(1);
		const p = ps[0];
		expect(p.family).toBe(true);
		expect(p.double).toBe(true);
		expect(p.gapMm).toBeCloseTo(2 * f, 9);
		expect(p.objectDistanceMm).toBeCloseTo(f, 9); // the symmetric member
		expect(p.backDistanceMm).toBeCloseTo(f, 9);
		expectImages([e, e], p, 4 * f, -1);
		// Every member of the family images too: s + d = 2f, any s.
		for (const s of [10, 33, 77]) {
			expectImages([e, e], { ...p, objectDistanceMm: s, backDistanceMm: 2 * f - s }, 4 * f, -1);
		}
	});

	it('two equal thick lenses at their afocal spacing form a family exactly when the track matches', () => {
		const e = element(singlet(51.5, -51.5, 4.2));
		const [a, b, c] = e.matrix;
		const g = (-2 * a) / c; // C = 0 for a symmetric lens pair
		const M = layoutMatrix(create(), { objectDistanceMm: 0, elements: [e, e], gapsMm: [g], backDistanceMm: 0 });
		const L = 2 * e.thicknessMm + g + M[1]; // s + d = B
		const ps = placements(placePair(e, e, L, -1));
		expect(ps.some((p) => p.family && Math.abs(p.gapMm! - g) < 1e-6)).toBe(true);
		for (const p of ps) expectImages([e, e], p, L, -1);
		void b;
	});

	it('an afocal pair with A = m ≠ ±1 has one placement; with A = 1/m none at that gap', () => {
		// Kepler telescope of invented thin lenses 100 and 50: A = −f2/f1 = −0.5 at g = 150.
		const e1 = thin(100),
			e2 = thin(50);
		const L = 400;
		const good = placements(placePair(e1, e2, L, -0.5));
		const afocal = good.filter((p) => Math.abs(p.gapMm! - 150) < 1e-6);
		expect(afocal).toHaveLength(1);
		expect(afocal[0].family).toBe(false);
		for (const p of good) expectImages([e1, e2], p, L, -0.5);
		const other = placements(placePair(e1, e2, L, -2));
		expect(other.some((p) => Math.abs(p.gapMm! - 150) < 1e-6)).toBe(false);
		for (const p of other) expectImages([e1, e2], p, L, -2);
	});

	it('non-physical roots come back flagged, consistent with their signs', () => {
		const r = rng(7);
		let flagged = 0;
		const out = new Float64Array(2 * ROOT_STRIDE);
		for (let k = 0; k < 300; k++) {
			const e1 = element(randomSinglet(r).surfaces),
				e2 = element(randomSinglet(r).surfaces);
			const ps = placements(placePair(e1, e2, uniform(r, 50, 600), -Math.exp(uniform(r, -1.5, 1.5))));
			for (const p of ps) {
				expect(p.virtualObject).toBe(p.objectDistanceMm < 0);
				expect(p.negativeGap).toBe(p.gapMm! < 0);
				expect(p.negativeBack).toBe(p.backDistanceMm < 0);
				if (p.virtualObject || p.negativeGap || p.negativeBack) flagged++;
			}
			const n = solvePairKernel(packElements([e1, e2]), 0, 1, 300, -1.7, out, 0);
			for (let i = 0; i < n; i++) expect(Number.isFinite(out[i * ROOT_STRIDE + ROOT_FLAGS])).toBe(true);
		}
		expect(flagged).toBeGreaterThan(10);
		expect(ROOT_NON_PHYSICAL & 1).toBe(0); // a double root alone is not non-physical
	});
});

describe('physical filter', () => {
	it('minAirGapMm equals a dense sampling of the gap across the aperture (the monotonicity argument)', () => {
		const r = rng(99);
		for (let k = 0; k < 500; k++) {
			const R1 = (r() < 0.5 ? -1 : 1) * uniform(r, 8, 300),
				R2 = (r() < 0.5 ? -1 : 1) * uniform(r, 8, 300);
			const h = uniform(r, 0.5, 0.95) * Math.min(Math.abs(R1), Math.abs(R2));
			const g = uniform(r, -5, 20);
			let sampled = Infinity;
			for (let i = 0; i <= 2000; i++) {
				const y = (h * i) / 2000;
				sampled = Math.min(sampled, g + sagMm(1 / R2, y)! - sagMm(1 / R1, y)!);
			}
			expect(minAirGapMm(1 / R1, 1 / R2, g, h)).toBeCloseTo(sampled, 9);
		}
	});

	it('nested menisci touch at the rim although the vertex gap is positive', () => {
		// invented: back surface R = −30 of the first part, front surface R = −25 of the second, both 20 mm clear
		const e1 = element(singlet(60, -30, 5), 587.5618, 20);
		const e2 = element(singlet(-25, -20, 4), 587.5618, 20);
		const snap = packElements([e1, e2]);
		const rim = 0.5 + sagMm(-1 / 25, 10)! - sagMm(-1 / 30, 10)!;
		expect(rim).toBeGreaterThan(0);
		expect(checkPairPhysical(snap, 0, 1, 50, 0.5, 50, 1, 0.1) & PHYS_SURFACES_TOUCH).toBe(0);
		expect(checkPairPhysical(snap, 0, 1, 50, 0.3, 50, 1, 0.1) & PHYS_SURFACES_TOUCH).toBe(PHYS_SURFACES_TOUCH);
		expect(checkPairPhysical(snap, 0, 1, 50, 0.3, 50, 1, 0.5) & PHYS_GAP).toBe(PHYS_GAP);
		expect(checkPairPhysical(snap, 0, 1, 0.5, 5, 50, 1, 0.1) & PHYS_OBJECT_DISTANCE).toBe(PHYS_OBJECT_DISTANCE);
	});

	it('a concave first surface cuts the object plane before its vertex reaches it', () => {
		const e = element(singlet(-20, -60, 3), 587.5618, 16);
		const snap = packElements([e]);
		// sag of R = −20 at 8 mm: −(20 − √336) = −1.67 mm
		expect(checkSinglePhysical(snap, 0, 1.5, 80, 1) & PHYS_OBJECT_PLANE).toBe(PHYS_OBJECT_PLANE);
		expect(checkSinglePhysical(snap, 0, 2.0, 80, 1)).toBe(0);
	});
});
