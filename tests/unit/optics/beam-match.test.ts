/**
 * The beam solvers' closed forms: polynomial roots in an interval, the one-part optimum and the
 * two-part exact match, each against an independent numeric search.
 */
import { describe, expect, it } from 'vitest';
import { realRootsIn, polyMultiply, pairMatchRoots, bestSinglePlacement, pairEfficiency, singleEfficiency, rayleighRangeMm, type MatchPart } from '../../../src/lib/optics';
import { rng, uniform } from './helpers';

const thin = (f: number): MatchPart => ({ a: 1, b: 0, c: -1 / f, d: 1, thicknessMm: 0 });
/** A thick part from f and invented principal planes h1, h2 (T(−h2)·Φ·T(h1), written out). */
const thick = (f: number, h1: number, h2: number, t: number): MatchPart => {
	const p = 1 / f;
	return { a: 1 + h2 * p, b: h1 - h2 * (1 - p * h1), c: -p, d: 1 - p * h1, thicknessMm: t };
};

describe('real roots of a polynomial in an interval', () => {
	it('finds simple, close and double roots and nothing outside the interval', () => {
		let p = [1];
		for (const r of [-4, 0.5, 0.5, 1, 1.0001, 3]) p = polyMultiply(p, [-r, 1]);
		const roots = realRootsIn(p, -3, 10);
		expect(roots.length).toBe(4);
		[0.5, 1, 1.0001, 3].forEach((r, k) => expect(roots[k]).toBeCloseTo(r, 6));
		expect(realRootsIn([1, 0, 1], -5, 5)).toEqual([]);
	});
	it('agrees with a fine sign-change scan on random polynomials of degree 6', () => {
		const r = rng(11);
		for (let n = 0; n < 50; n++) {
			const c = Array.from({ length: 7 }, () => uniform(r, -1, 1));
			const roots = realRootsIn(c, -2, 2);
			let changes = 0;
			let prev = c.reduce((a, v, k) => a + v * (-2) ** k, 0);
			for (let x = -2 + 1e-4; x <= 2; x += 1e-4) {
				const v = c.reduce((a, cv, k) => a + cv * x ** k, 0);
				if (v * prev < 0) changes++;
				prev = v;
			}
			expect(roots.length).toBe(changes);
		}
	});
});

describe('mode matching with parts (closed forms, re-verified by the matrices)', () => {
	const lambda = 1064;
	const beams = { inWaistZMm: -100, inRayleighMm: rayleighRangeMm(1, lambda), targetZMm: 250, targetRayleighMm: rayleighRangeMm(0.02, lambda) };

	it('one part: the optimum equals the best of a 0.01 mm scan of its position', () => {
		for (const part of [thin(30), thin(60), thick(45, 2, -1.5, 4), thick(-40, 1, -1, 2)]) {
			const best = bestSinglePlacement(beams, part, 0, 240)!;
			let scan = 0;
			for (let p = 0; p <= 240; p += 0.01) scan = Math.max(scan, singleEfficiency(beams, part, p));
			expect(best.efficiency).toBeGreaterThanOrEqual(scan - 1e-9);
			expect(best.efficiency - scan).toBeLessThan(1e-5);
		}
	});

	it('two parts: every root matches exactly, and a dense scan of p1 with a 1-D root solve of the gap finds the same roots', () => {
		let total = 0;
		for (const [e1, e2] of [
			[thin(-50), thin(100)],
			[thin(50), thin(100)],
			[thick(100, 3, -2, 5), thick(30, 1, -0.5, 3)],
			[thick(-25, 0.5, -0.5, 2), thick(60, 2, -1, 4)]
		]) {
			const roots = pairMatchRoots(beams, e1, e2, 0, Infinity);
			for (const r of roots) expect(pairEfficiency(beams, e1, e2, r.p1Mm, r.gapMm)).toBeGreaterThan(1 - 1e-9);
			// Independent: for each p1 the gap that puts the output waist on the target plane (bisection on Re q),
			// then sign changes of the waist-size mismatch along p1.
			const found: number[] = [];
			const mismatch = (p1: number): number[] => {
				const out: number[] = [];
				const waistAt = (g: number) => {
					// output q at the target plane by the law, written out
					const prop = (qr: number, qi: number, e: MatchPart) => {
						const nr = e.a * qr + e.b,
							ni = e.a * qi,
							dr = e.c * qr + e.d,
							di = e.c * qi,
							den = dr * dr + di * di;
						return [(nr * dr + ni * di) / den, (ni * dr - nr * di) / den];
					};
					const q1 = prop(p1 - beams.inWaistZMm, beams.inRayleighMm, e1);
					const q2 = prop(q1[0] + g, q1[1], e2);
					return [q2[0] + beams.targetZMm - (p1 + e1.thicknessMm + g + e2.thicknessMm), q2[1]];
				};
				let gPrev = -400,
					vPrev = waistAt(gPrev)[0];
				for (let g = -399; g <= 800; g += 1) {
					const v = waistAt(g)[0];
					if (v * vPrev < 0 && Math.abs(v - vPrev) < 1e4) {
						let lo = gPrev,
							hi = g;
						for (let k = 0; k < 80; k++) {
							const mid = (lo + hi) / 2;
							if (waistAt(mid)[0] * waistAt(lo)[0] <= 0) hi = mid;
							else lo = mid;
						}
						out.push(waistAt(lo)[1] - beams.targetRayleighMm);
					}
					gPrev = g;
					vPrev = v;
				}
				return out;
			};
			let prev = mismatch(-800);
			for (let p1 = -799; p1 <= 800; p1 += 1) {
				const cur = mismatch(p1);
				if (cur.length === prev.length) for (let k = 0; k < cur.length; k++) if (cur[k] * prev[k] < 0) found.push(p1);
				prev = cur;
			}
			const inRange = roots.filter((r) => r.p1Mm > -800 && r.p1Mm < 800 && r.gapMm > -399 && r.gapMm < 800);
			expect(inRange.length).toBe(found.length);
			for (const p of found) expect(inRange.some((r) => Math.abs(r.p1Mm - p) <= 1.01)).toBe(true);
			total += found.length;
		}
		expect(total).toBeGreaterThanOrEqual(6);
	});
});
