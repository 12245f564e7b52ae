/**
 * Build from stock, checked on small invented stocks: every returned solution re-verified
 * from its positions alone (mathjs matrices), equality with a brute-force numeric search,
 * the classic 2f–2f single lens, the afocal 4f pair family, double roots at m = ±1, the
 * orientation rule of a 1:1 relay, and the request validation.
 */
import { describe, expect, it } from 'vitest';
import { multiply, matrix, type Matrix } from 'mathjs';
import { solveWithStock } from '../../../src/lib/server/solver/solve';
import { imagingRequestSchema as solveRequestSchema } from '../../../src/lib/solver/request';
import { buildElementSnapshot, type CandidatePart } from '../../../src/lib/server/solver/elements';
import { refractiveIndex, cardinalPoints, checkPairPhysical, checkSinglePhysical } from '../../../src/lib/optics';
import type { Solution } from '../../../src/lib/solver/types';
import { lensMaker } from './test-lens';

const { lens, stockOf } = lensMaker({ firstId: 1, prefix: 'T', name: 'Test lens' });

const ask = (q: Record<string, unknown>) => solveRequestSchema.parse({ wavelengthNm: 587.6, objectNA: 0.02, minGapMm: 0.5, minWorkingDistanceMm: 2, limit: 50, ...q });

/**
 * Independent check: rebuild the object-to-target matrix from the solution's positions with
 * mathjs (refraction [[1,0],[−(n'−n)/R,1]], translation [[1,t/n],[0,1]], Hecht, Optics, 5th ed.
 * 2017, §6.2 "matrix methods"; from memory), B ≈ 0 and A ≈ m.
 */
function independentMatrix(s: Solution, wavelengthNm: number, parts: CandidatePart[]): Matrix {
	let m: Matrix = matrix([
		[1, 0],
		[0, 1]
	]);
	const T = (t: number, n = 1) => matrix([
		[1, t / n],
		[0, 1]
	]);
	let z = 0;
	for (const e of s.elements) {
		m = multiply(T(e.firstVertexMm - z), m) as Matrix;
		const part = parts.find((p) => p.partId === e.partId)!;
		const surf = e.reversed
			? [...part.surfaces].reverse().map((x, k, all) => ({ r: x.radiusMm === null ? null : -x.radiusMm, mat: k + 1 < all.length ? all[k + 1].material ?? null : null, t: k + 1 < all.length ? all[k + 1].thicknessMm ?? 0 : 0 }))
			: part.surfaces.map((x) => ({ r: x.radiusMm, mat: x.material ?? null, t: x.thicknessMm ?? 0 }));
		let nBefore = 1;
		surf.forEach((sf, k) => {
			const nAfter = k + 1 < surf.length ? refractiveIndex(sf.mat, wavelengthNm) : 1;
			const power = sf.r === null ? 0 : (nAfter - nBefore) / sf.r;
			m = multiply(matrix([[1, 0], [-power, 1]]), m) as Matrix;
			if (k + 1 < surf.length) m = multiply(T(sf.t, nAfter), m) as Matrix;
			nBefore = nAfter;
		});
		z = e.firstVertexMm + e.thicknessMm;
	}
	return multiply(T(s.trackMm - z), m) as Matrix;
}

const PCX100 = () => lens(51.7, null, 4); // f ≈ 100 mm plano-convex (R = (n − 1) f)
const BCX50 = () => lens(51.2, -51.2, 5); // f ≈ 50 mm equiconvex

describe('every returned solution, re-verified from its positions', () => {
	it('has B ≈ 0 and A ≈ m by an independent matrix product, and respects the limits', async () => {
		const parts = [PCX100(), BCX50(), lens(77.6, null, 3.5), lens(-25.9, null, 2, 25.4), lens(38.8, 103.4, 4)];
		const q = ask({ trackMm: 320, magnification: -0.6, objectHeightMm: 1.5, minGapMm: 2, minWorkingDistanceMm: 10 });
		const r = await solveWithStock(stockOf(parts), q, { inline: true });
		expect(r.solutions.length).toBeGreaterThan(3);
		for (const s of r.solutions) {
			const M = independentMatrix(s, q.wavelengthNm, parts);
			expect(Math.abs(M.get([0, 1]))).toBeLessThan(1e-6);
			if (s.elements.length === 2) expect(M.get([0, 0])).toBeCloseTo(q.magnification, 6);
			else expect(Math.abs(M.get([0, 0]) / q.magnification - 1)).toBeLessThanOrEqual(q.magnificationTolerance + 1e-9);
			expect(s.objectDistanceMm).toBeGreaterThanOrEqual(10);
			expect(s.backDistanceMm).toBeGreaterThanOrEqual(10);
			for (const g of s.gapsMm) expect(g).toBeGreaterThanOrEqual(2);
		}
		expect(r.stats.configurationsEvaluated).toBeGreaterThan(0);
	});
});

/**
 * Brute force: for each ordered pair, scan the gap g on a fine grid; at each g solve the
 * single-element problem of the pair's combined matrix over the remaining track (a
 * quadratic in s, same algebra as a single lens) and watch m(g) − m change sign; refine by
 * bisection. Independent of the closed-form gap quadratic. Sources: the imaging condition
 * B = 0 of the ABCD matrix (Gerrard & Burch, Introduction to Matrix Methods in Optics,
 * 1975, ch. 2; from memory).
 */
function bruteForcePairs(parts: CandidatePart[], q: ReturnType<typeof ask>): { key: string; g: number }[] {
	const snap = buildElementSnapshot(parts, q.wavelengthNm);
	const out: { key: string; g: number }[] = [];
	const n = snap.elements.length;
	for (let i = 0; i < n; i++)
		for (let j = 0; j < n; j++) {
			if (snap.partIndex[i] === snap.partIndex[j] && snap.parts[snap.partIndex[i]].available < 2) continue;
			const e1 = snap.elements[i].matrix,
				e2 = snap.elements[j].matrix;
			const lam = q.trackMm - snap.elements[i].thicknessMm - snap.elements[j].thicknessMm;
			// For gap g: K = E2·T(g)·E1; conjugates s, d = lam − g − s with B = 0: c s² + (D − A − Λc) s − (b + Λ D) = 0.
			const roots = (g: number) => {
				const ta = e1[0] + g * e1[2],
					tb = e1[1] + g * e1[3];
				const a = e2[0] * ta + e2[1] * e1[2],
					b = e2[0] * tb + e2[1] * e1[3],
					c = e2[2] * ta + e2[3] * e1[2],
					d = e2[2] * tb + e2[3] * e1[3];
				const L = lam - g;
				const qa = c,
					qb = d - a - L * c,
					qc = -(b + L * d);
				const disc = qb * qb - 4 * qa * qc;
				if (disc < 0 || qa === 0) return [] as { s: number; dd: number; m: number }[];
				return [(-qb - Math.sqrt(disc)) / (2 * qa), (-qb + Math.sqrt(disc)) / (2 * qa)].map((s) => ({ s, dd: L - s, m: 1 / (c * s + d) }));
			};
			const N = 4000;
			for (const branch of [0, 1]) {
				let prev: { g: number; f: number } | null = null;
				for (let k = 0; k <= N; k++) {
					const g = (lam * k) / N;
					const r = roots(g)[branch];
					if (!r) {
						prev = null;
						continue;
					}
					const f = r.m - q.magnification;
					if (prev && Math.sign(f) !== Math.sign(prev.f) && Math.abs(f - prev.f) < 1) {
						let lo = prev.g,
							hi = g,
							flo = prev.f;
						for (let it = 0; it < 80; it++) {
							const mid = (lo + hi) / 2;
							const rm = roots(mid)[branch];
							if (!rm) break;
							const fm = rm.m - q.magnification;
							if (Math.sign(fm) === Math.sign(flo)) {
								lo = mid;
								flo = fm;
							} else hi = mid;
						}
						const gg = (lo + hi) / 2;
						const rr = roots(gg)[branch]!;
						const ok = checkPairPhysical(snap.packed, i, j, rr.s, gg, rr.dd, q.minWorkingDistanceMm, q.minGapMm) === 0 && rr.s > 0 && rr.dd > 0;
						if (ok) out.push({ key: `${snap.parts[snap.partIndex[i]].partId}${snap.reversed[i] ? 'r' : ''}-${snap.parts[snap.partIndex[j]].partId}${snap.reversed[j] ? 'r' : ''}`, g: gg });
					}
					prev = { g, f };
				}
			}
		}
	return out;
}

describe('the pair search against a brute-force numeric search', () => {
	it('finds exactly the physical pairs a fine gap scan with bisection finds', async () => {
		const parts = [PCX100(), BCX50(), lens(38.8, null, 3), lens(-38.8, null, 2), lens(25.9, 69, 3.5)];
		const q = ask({ trackMm: 260, magnification: -0.45, maxElements: 2 });
		const r = await solveWithStock(stockOf(parts), q, { inline: true, keepAll: true });
		const ours = r.solutions
			.filter((s) => s.elements.length === 2)
			.map((s) => ({ key: s.elements.map((e) => `${e.partId}${e.reversed ? 'r' : ''}`).join('-'), g: s.gapsMm[0] }));
		const brute = bruteForcePairs(parts, q);
		// Symmetric parts appear once (not reversed) in the solver; normalise the brute force likewise.
		const snap = buildElementSnapshot(parts, q.wavelengthNm);
		const norm = (k: string) =>
			k
				.split('-')
				.map((x) => {
					const id = Number(x.replace('r', ''));
					return snap.symmetricPart[snap.parts.findIndex((p) => p.partId === id)] ? String(id) : x;
				})
				.join('-');
		const a = ours.map((o) => `${norm(o.key)}@${o.g.toFixed(3)}`).sort();
		const b = [...new Set(brute.map((o) => `${norm(o.key)}@${o.g.toFixed(3)}`))].sort();
		expect(b.length).toBeGreaterThan(5);
		expect(a).toEqual(b);
	});
});

describe('classic configurations', () => {
	it('finds a single lens at 2f–2f for m = −1 (common practice, no source)', async () => {
		const p = BCX50();
		const snap = buildElementSnapshot([p], 587.6);
		const cp = cardinalPoints(snap.elements[0].matrix)!;
		// Track for 2f–2f measured between the principal planes, plus the element's own H–H' offsets.
		const track = 4 * cp.eflMm + snap.elements[0].thicknessMm + cp.backPrincipalMm - cp.frontPrincipalMm;
		const r = await solveWithStock(stockOf([p]), ask({ trackMm: track, magnification: -1, maxElements: 1 }), { inline: true });
		expect(r.solutions).toHaveLength(1);
		const s = r.solutions[0];
		expect(s.magnification).toBeCloseTo(-1, 6);
		expect(s.objectDistanceMm + cp.frontPrincipalMm).toBeCloseTo(2 * cp.eflMm, 4);
		expect(s.doubleRoot).toBe(true);
	});

	it('returns two equal lenses over a 4f track at m = −1 as the afocal family, symmetric member', async () => {
		const p = BCX50();
		const snap = buildElementSnapshot([p], 587.6);
		const e = snap.elements[0];
		const cp = cardinalPoints(e.matrix)!;
		// Object at F1, image at F2', F1' = F2: L = FFL + t + BFL + FFL + t + BFL.
		const track = 2 * (cp.fflMm + e.thicknessMm + cp.bflMm);
		const r = await solveWithStock(stockOf([p]), ask({ trackMm: track, magnification: -1, maxElements: 2 }), { inline: true });
		const pair = r.solutions.find((s) => s.elements.length === 2);
		expect(pair, 'the afocal pair is among the answers').toBeDefined();
		expect(pair!.afocalFamily).toBe(true);
		expect(pair!.objectDistanceMm).toBeCloseTo(pair!.backDistanceMm, 6);
		expect(pair!.gapsMm[0]).toBeCloseTo(cp.bflMm + cp.fflMm, 6);
		expect(Math.abs(pair!.systemMatrix.C)).toBeLessThan(1e-9);
		expect(Number.isFinite(pair!.objectDistanceMm)).toBe(true);
	});

	it('finds pairs at m = −1 and m = +1, where m + 1/m is extremal and gap roots can merge', async () => {
		const parts = [PCX100(), lens(51.7, null, 4)];
		for (const m of [-1, 1]) {
			const r = await solveWithStock(stockOf(parts), ask({ trackMm: m === -1 ? 430 : 850, magnification: m, objectNA: 0.01 }), { inline: true, keepAll: true });
			const pairs = r.solutions.filter((s) => s.elements.length === 2);
			expect(pairs.length, `m = ${m}`).toBeGreaterThan(0);
			for (const s of pairs) expect(s.magnification).toBeCloseTo(m, 6);
		}
	});

	it('ranks the 1:1 relay of two plano-convex lenses with the convex sides facing each other first (common practice, no source)', async () => {
		const p = lens(51.7, null, 4, 25.4, 2);
		const snap = buildElementSnapshot([p], 587.6);
		const e = snap.elements[0];
		const cp = cardinalPoints(e.matrix)!;
		const track = 2 * (cp.fflMm + e.thicknessMm + cp.bflMm) + 40;
		const r = await solveWithStock(stockOf([p]), ask({ trackMm: track, magnification: -1, objectNA: 0.1, maxElements: 2 }), { inline: true });
		const pairs = r.solutions.filter((s) => s.elements.length === 2);
		expect(pairs.length).toBeGreaterThanOrEqual(3);
		const best = pairs[0];
		// Catalogue orientation: curved face first. Facing convex faces: first lens turned round (flat face to the object), second as catalogued.
		expect(best.elements.map((x) => x.reversed)).toEqual([true, false]);
		expect(best.elements[0].orientation).toMatch(/^flat face toward the object, curved \(convex\) face toward the image/);
		for (const other of pairs.slice(1)) expect(other.spot.ratioToAiry!).toBeGreaterThan(best.spot.ratioToAiry!);
	});

	it('a part with one available unit is never used twice', async () => {
		const p = lens(51.7, null, 4, 25.4, 1);
		const r = await solveWithStock(stockOf([p]), ask({ trackMm: 430, magnification: -1 }), { inline: true, keepAll: true });
		expect(r.solutions.every((s) => s.elements.length === 1)).toBe(true);
	});

	it('single parts meet the working distance limits of the physical filter', async () => {
		const p = PCX100();
		const snap = buildElementSnapshot([p], 587.6);
		const r = await solveWithStock(stockOf([p]), ask({ trackMm: 450, magnification: -0.5, magnificationTolerance: 0.05, maxElements: 1 }), { inline: true });
		expect(r.solutions.length).toBeGreaterThan(0);
		for (const s of r.solutions) {
			const i = s.elements[0].reversed ? 1 : 0;
			expect(checkSinglePhysical(snap.packed, i, s.objectDistanceMm, s.backDistanceMm, 2)).toBe(0);
		}
	});
});

describe('bad questions', () => {
	const base = { trackMm: 300, magnification: -0.5, objectNA: 0.05 };
	const fieldOf = (body: unknown) => {
		const r = solveRequestSchema.safeParse(body);
		return r.success ? null : r.error.issues[0].path.join('.');
	};
	it.each([
		[{ ...base, trackMm: 0 }, 'trackMm'],
		[{ ...base, trackMm: -5 }, 'trackMm'],
		[{ ...base, magnification: 0 }, 'magnification'],
		[{ ...base, objectNA: 1 }, 'objectNA'],
		[{ ...base, objectNA: 1.2 }, 'objectNA'],
		[{ ...base, minGapMm: -1 }, 'minGapMm'],
		[{ ...base, limit: 500 }, 'limit'],
		[{ ...base, magnificationTolerance: 2 }, 'magnificationTolerance'],
		[{ ...base, wavelengthNm: 50 }, 'wavelengthNm'],
		[{ ...base, surprise: 1 }, '']
	])('%j is refused naming %s', (body, field) => {
		expect(fieldOf(body)).toBe(field);
	});

	it('refuses a wavelength outside every material of the stock, naming wavelengthNm', async () => {
		await expect(solveWithStock(stockOf([PCX100()]), ask({ trackMm: 300, magnification: -0.5, wavelengthNm: 2500 }), { inline: true })).rejects.toMatchObject({
			status: 400,
			fields: { wavelengthNm: expect.stringContaining('2500') }
		});
	});
});
