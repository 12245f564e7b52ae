/**
 * Property-style tests over seeded random invented lenses and conjugates: the invariants
 * every part of the optics core must keep, whatever the numbers.
 */
import { describe, expect, it } from 'vitest';
import {
	buildElement,
	reverseElement,
	determinant,
	matApproxEqual,
	approxEqual,
	cardinalPoints,
	layoutMatrix,
	imageAfter,
	traceSystemFromLayout,
	axialCrossingMm,
	packElements,
	solvePairKernel,
	solveSingleKernel,
	checkPairPhysical,
	placementLayout,
	placePair,
	create,
	ROOT_STRIDE,
	ROOT_FLAGS,
	ROOT_UNVERIFIED,
	ROOT_OBJECT_DISTANCE,
	ROOT_GAP,
	ROOT_BACK_DISTANCE,
	type Layout,
	type ThickElement
} from '../../../src/lib/optics';
import { rng, uniform, randomSinglet } from './helpers';

function randomElement(r: () => number, wavelengthNm: number, reversed = false): ThickElement {
	const s = randomSinglet(r);
	const e = buildElement(s.surfaces, wavelengthNm, { clearApertureMm: s.clearApertureMm, reversed });
	if (!e.ok) throw e.error;
	return e.value;
}

describe('invariants over random lenses (seeded)', () => {
	it('every reduced matrix has determinant 1: elements, reversed elements, layouts', () => {
		const r = rng(1);
		for (let k = 0; k < 500; k++) {
			const lam = uniform(r, 400, 1000);
			const e1 = randomElement(r, lam),
				e2 = randomElement(r, lam, true);
			expect(determinant(e1.matrix)).toBeCloseTo(1, 12);
			expect(determinant(e2.matrix)).toBeCloseTo(1, 12);
			const layout: Layout = {
				objectDistanceMm: uniform(r, 1, 500),
				elements: [e1, e2],
				gapsMm: [uniform(r, 0, 100)],
				backDistanceMm: uniform(r, 1, 500)
			};
			expect(determinant(layoutMatrix(create(), layout))).toBeCloseTo(1, 10);
		}
	});

	it('reversing a part twice gives it back; reversing keeps the EFL and swaps BFL and FFL', () => {
		const r = rng(2);
		for (let k = 0; k < 500; k++) {
			const e = randomElement(r, uniform(r, 400, 1000));
			const rev = reverseElement(e);
			expect(matApproxEqual(reverseElement(rev).matrix, e.matrix, 1e-13)).toBe(true);
			const a = cardinalPoints(e.matrix)!,
				b = cardinalPoints(rev.matrix)!;
			expect(approxEqual(a.eflMm, b.eflMm, 1e-11)).toBe(true);
			expect(approxEqual(a.bflMm, b.fflMm, 1e-10)).toBe(true);
			expect(approxEqual(a.fflMm, b.bflMm, 1e-10)).toBe(true);
		}
	});

	it('focal points lie one EFL from the principal planes (BFL = EFL + h′, FFL = EFL − h)', () => {
		const r = rng(3);
		for (let k = 0; k < 500; k++) {
			const c = cardinalPoints(randomElement(r, 587.56).matrix)!;
			expect(approxEqual(c.bflMm, c.eflMm + c.backPrincipalMm, 1e-10)).toBe(true);
			expect(approxEqual(c.fflMm, c.eflMm - c.frontPrincipalMm, 1e-10)).toBe(true);
		}
	});

	it('real rays of random singlets converge to the paraxial image as NA → 0', () => {
		const r = rng(4);
		let checked = 0;
		for (let k = 0; k < 200; k++) {
			const e = randomElement(r, 632.8);
			const c = cardinalPoints(e.matrix)!;
			if (c.eflMm < 0) continue;
			// object between 1.3 f and 6 f in front of the front focal point's principal plane: a real image
			const s0 = c.fflMm + uniform(r, 0.3, 5) * c.eflMm;
			const base: Layout = { objectDistanceMm: s0, elements: [e], gapsMm: [], backDistanceMm: 0 };
			const img = imageAfter(layoutMatrix(create(), base))!;
			const sys = traceSystemFromLayout({ ...base, backDistanceMm: img.imageDistanceMm });
			if (!sys.ok) throw sys.error;
			const z = sys.value.imageZMm;
			const e1 = Math.abs(axialCrossingMm(sys.value, 1e-3)! - z);
			const e2 = Math.abs(axialCrossingMm(sys.value, 1e-4)! - z);
			expect(e2).toBeLessThan(1e-6 * z + 0.02 * e1);
			checked++;
		}
		expect(checked).toBeGreaterThan(50);
	});

	it('every kernel root over a random snapshot is verified, finite and matches its full layout matrix', () => {
		const r = rng(5);
		const elements: ThickElement[] = [];
		for (let k = 0; k < 40; k++) elements.push(randomElement(r, 550, k % 2 === 1));
		const snap = packElements(elements);
		const out = new Float64Array(2 * ROOT_STRIDE);
		let roots = 0;
		const problems: string[] = [];
		for (let q = 0; q < 20; q++) {
			const L = uniform(r, 60, 900);
			const m = (r() < 0.7 ? -1 : 1) * Math.exp(uniform(r, -2.3, 2.3));
			for (let i = 0; i < elements.length; i++) {
				const ns = solveSingleKernel(snap, i, L, out, 0);
				for (let k = 0; k < ns; k++) if (out[k * ROOT_STRIDE + ROOT_FLAGS] & ROOT_UNVERIFIED) problems.push(`single ${i} L=${L}`);
				for (let j = 0; j < elements.length; j++) {
					if (i === j) continue;
					const n = solvePairKernel(snap, i, j, L, m, out, 0);
					for (let k = 0; k < n; k++) {
						const o = k * ROOT_STRIDE;
						if (out[o + ROOT_FLAGS] & ROOT_UNVERIFIED) problems.push(`pair ${i},${j} L=${L} m=${m} unverified`);
						for (let x = 0; x < ROOT_STRIDE; x++) if (!Number.isFinite(out[o + x])) problems.push(`pair ${i},${j} not finite`);
						// the physical check returns a bit set, never throws
						const bad = checkPairPhysical(snap, i, j, out[o + ROOT_OBJECT_DISTANCE], out[o + ROOT_GAP], out[o + ROOT_BACK_DISTANCE], 1, 0.5);
						if (!Number.isInteger(bad)) problems.push(`pair ${i},${j} physical ${bad}`);
						roots++;
					}
				}
			}
		}
		expect(problems).toEqual([]);
		expect(roots).toBeGreaterThan(1000);
		// spot check a few through the object API and an independent layout matrix
		const e1 = elements[3],
			e2 = elements[8];
		const res = placePair(e1, e2, 500, -1.5);
		if (res.ok) {
			for (const p of res.placements) {
				const M = layoutMatrix(create(), placementLayout([e1, e2], p));
				expect(Math.abs(M[1])).toBeLessThan(1e-7);
				expect(M[0]).toBeCloseTo(-1.5, 8);
			}
		}
	});
});
