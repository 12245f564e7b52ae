/**
 * Modes beam and afocal of Build from stock on small invented stocks: completeness of the two-part
 * answers against an independent brute-force numeric search, every returned answer re-propagated
 * with mathjs complex arithmetic (matrices rebuilt surface by surface), the afocal answers checked
 * from their matrices, the near miss of a question without an answer, and the request validation.
 */
import { describe, expect, it } from 'vitest';
import { complex, multiply as mmul, matrix, add, divide, abs, type Complex, type Matrix } from 'mathjs';
import { solveBeamWithStock, solveAfocalWithStock } from '../../../src/lib/server/solver/beam-solve';
import { solveRequestSchema, type ParsedAfocalRequest, type ParsedBeamRequest } from '../../../src/lib/solver/request';
import { buildElementSnapshot, clearApertureOf, type CandidatePart } from '../../../src/lib/server/solver/elements';
import { refractiveIndex, checkPairPhysical, type ThickElement } from '../../../src/lib/optics';
import { zodFields } from '../../../src/lib/server/errors';
import type { BeamSolution } from '../../../src/lib/solver/types';
import { syntheticStock } from '../../bench/_synthetic-stock';
import { beamKernelOptions, decodeRankKey, encodeRankKey } from '../../../src/lib/server/solver/beam-kernel';
import { mulberry32 } from '../../../src/lib/prng';
import { lensMaker } from './test-lens';

const { lens, stockOf } = lensMaker({ firstId: 1, prefix: 'B', name: 'Beam test lens' });
const beamQ = (q: Record<string, unknown>) => solveRequestSchema.parse({ mode: 'beam', wavelengthNm: 1064, minGapMm: 1, minWorkingDistanceMm: 5, limit: 50, ...q }) as ParsedBeamRequest;
const afocalQ = (q: Record<string, unknown>) => solveRequestSchema.parse({ mode: 'afocal', wavelengthNm: 632.8, minGapMm: 1, limit: 50, ...q }) as ParsedAfocalRequest;

/** Invented stock: plano-convex, biconvex, plano-concave and a meniscus, 12.7–50.8 mm. */
const STOCK = () => [
	lens(25.8, null, 4, 25.4),
	lens(51.7, null, 3.5, 25.4),
	lens(103, -103, 3, 25.4),
	lens(null, -77.5, 3, 50.8),
	lens(-25.8, null, 2, 12.7),
	lens(-51.7, 51.7, 2, 25.4),
	lens(30, 80, 4, 25.4)
];

/**
 * Independent element matrix, surface by surface with mathjs (refraction [[1, 0], [−(n′ − n)/R, 1]],
 * translation [[1, t/n], [0, 1]] on (y, n·u); Kogelnik & Li 1966, section III, and Hecht, Optics,
 * 2017, §6.2, from memory).
 */
function mathjsElement(part: CandidatePart, reversed: boolean, wavelengthNm: number): Matrix {
	let s = part.surfaces.map((x) => ({ ...x }));
	if (reversed) {
		const r = [...s].reverse();
		s = r.map((x, k) => ({ radiusMm: x.radiusMm === null ? null : -x.radiusMm, thicknessMm: k < r.length - 1 ? r[k + 1].thicknessMm : undefined, material: k < r.length - 1 ? r[k + 1].material : undefined }));
	}
	let m: Matrix = matrix([
		[1, 0],
		[0, 1]
	]);
	let n = 1;
	s.forEach((x, k) => {
		const n2 = k < s.length - 1 ? refractiveIndex(x.material ?? null, wavelengthNm) : 1;
		const p = x.radiusMm === null ? 0 : (n2 - n) / x.radiusMm;
		m = mmul(
			matrix([
				[1, 0],
				[-p, 1]
			]),
			m
		) as Matrix;
		if (k < s.length - 1) m = mmul(matrix([[1, (x.thicknessMm ?? 0) / n2], [0, 1]]), m) as Matrix;
		n = n2;
	});
	return m;
}

/** q through a 2×2 mathjs matrix, complex: (A q + B)/(C q + D). */
function qThrough(q: Complex, m: Matrix): Complex {
	const [a, b, c, d] = [m.get([0, 0]), m.get([0, 1]), m.get([1, 0]), m.get([1, 1])];
	const aq = mmul(a, q) as unknown as Complex,
		cq = mmul(c, q) as unknown as Complex;
	return divide(add(aq, b) as Complex, add(cq, d) as Complex) as Complex;
}

describe('mode beam', () => {
	const parts = STOCK();
	const stock = stockOf(parts);
	const req = beamQ({ input: { waistDiameterMm: 2, waistPositionMm: -100 }, target: { waistDiameterMm: 0.04, waistPositionMm: 250 }, minClearance: 1.2 });

	it('every returned answer, re-propagated with mathjs complex numbers, has the reported waist and efficiency', async () => {
		const r = await solveBeamWithStock(stock, req, { inline: true });
		expect(r.solutions.length).toBeGreaterThan(3);
		const lambda = 1064e-6;
		const z0 = (Math.PI * 1 * 1) / lambda,
			zt = (Math.PI * 0.02 * 0.02) / lambda;
		for (const s of r.solutions) {
			let q: Complex = complex(s.elements[0].firstVertexMm - -100, z0);
			let z = s.elements[0].firstVertexMm;
			for (const e of s.elements) {
				q = add(q, e.firstVertexMm - z) as Complex;
				q = qThrough(q, mathjsElement(parts.find((p) => p.partId === e.partId)!, e.reversed, 1064));
				z = e.firstVertexMm + e.thicknessMm;
			}
			// Waist: −Re q after the last vertex; w0 = √(z_R λ/π).
			expect(z - q.re).toBeCloseTo(s.beam.outputWaistPositionMm, 6);
			expect(2 * Math.sqrt((q.im * lambda) / Math.PI)).toBeCloseTo(s.beam.outputWaistDiameterMm, 9);
			// Overlap at the target plane, η = 4 z_R1 z_R2/|q1 − conj(q2)|² (Joyce & DeLoach 1984, in q form).
			const qt = add(q, 250 - z) as Complex;
			const eta = (4 * qt.im * zt) / (abs(add(qt, complex(0, zt)) as Complex) as unknown as number) ** 2;
			expect(eta).toBeCloseTo(s.beam.efficiency, 9);
			for (const p of s.beam.parts) expect(p.clearance).toBeGreaterThanOrEqual(1.2 * (1 - 1e-9));
		}
		// Ranked: efficiency, then clearance class, then length.
		for (let k = 1; k < r.solutions.length; k++) expect(r.solutions[k].beam.efficiency).toBeLessThanOrEqual(r.solutions[k - 1].beam.efficiency + 1e-6);
	});

	it('the two-part answers equal a brute-force search (dense scan of part 1, 1-D root solve for part 2)', async () => {
		const all = await solveBeamWithStock(stock, { ...req, maxElements: 2, minEfficiency: 0.999 }, { inline: true, keepAll: true });
		const pairs = all.solutions.filter((s) => s.elements.length === 2);
		const snap = buildElementSnapshot(parts, 1064);
		const z0 = (Math.PI * 1) / 1064e-6,
			zt = (Math.PI * 0.0004) / 1064e-6;
		const propagate = (q: [number, number], m: ArrayLike<number>): [number, number] => {
			const nr = m[0] * q[0] + m[1],
				ni = m[0] * q[1],
				dr = m[2] * q[0] + m[3],
				di = m[2] * q[1],
				den = dr * dr + di * di;
			return [(nr * dr + ni * di) / den, (ni * dr - nr * di) / den];
		};
		const radius = (q: [number, number]) => Math.sqrt(((q[1] * 1064e-6) / Math.PI) * (1 + (q[0] / q[1]) ** 2));
		const found: { i: number; j: number; p1: number }[] = [];
		const n = snap.elements.length;
		for (let i = 0; i < n; i++) {
			for (let j = 0; j < n; j++) {
				if (snap.partIndex[i] === snap.partIndex[j] && snap.parts[snap.partIndex[i]].available < 2) continue;
				const e1: ThickElement = snap.elements[i],
					e2 = snap.elements[j];
				// For a first-part position p1, the output waist position error as a function of the second part's first vertex p2.
				const waistError = (p1: number, p2: number) => {
					let q = propagate([p1 + 100, z0], e1.matrix);
					q = propagate([q[0] + (p2 - p1 - e1.thicknessMm), q[1]], e2.matrix);
					return { err: q[0] + (250 - p2 - e2.thicknessMm), q };
				};
				const sizeErrors = (p1: number): { p2: number; d: number }[] => {
					const out: { p2: number; d: number }[] = [];
					const lo = p1 + e1.thicknessMm + 1,
						hi = 250 - 5 - e2.thicknessMm;
					let a = lo,
						fa = waistError(p1, a).err;
					for (let p2 = lo + 0.25; p2 <= hi + 1e-9; p2 += 0.25) {
						const fb = waistError(p1, p2).err;
						if (fa * fb < 0 && Math.abs(fa - fb) < 1e4) {
							let x = a,
								y = p2;
							for (let k = 0; k < 70; k++) {
								const m = (x + y) / 2;
								if (waistError(p1, m).err * waistError(p1, x).err <= 0) y = m;
								else x = m;
							}
							out.push({ p2: x, d: waistError(p1, x).q[1] - zt });
						}
						a = p2;
						fa = fb;
					}
					return out;
				};
				let prev = sizeErrors(0);
				for (let p1 = 0.25; p1 <= 250; p1 += 0.25) {
					const cur = sizeErrors(p1);
					if (cur.length === prev.length) {
						for (let k = 0; k < cur.length; k++) {
							if (cur[k].d * prev[k].d < 0) {
								// Physical filter as the question states it (gap, surfaces, working distance, clearance 1.2).
								const gap = cur[k].p2 - p1 - e1.thicknessMm;
								const d = 250 - cur[k].p2 - e2.thicknessMm;
								if (checkPairPhysical(snap.packed, i, j, p1 + 5, gap, d, 5, 1) & ~16) continue;
								let q: [number, number] = [p1 + 100, z0];
								const r1 = radius(q);
								q = propagate(q, e1.matrix);
								const r2 = radius(q);
								q = [q[0] + gap, q[1]];
								const r3 = radius(q);
								q = propagate(q, e2.matrix);
								const r4 = radius(q);
								const ca1 = clearApertureOf(snap.parts[snap.partIndex[i]]),
									ca2 = clearApertureOf(snap.parts[snap.partIndex[j]]);
								if (Math.min(ca1 / (2 * Math.max(r1, r2)), ca2 / (2 * Math.max(r3, r4))) < 1.2) continue;
								found.push({ i, j, p1 });
							}
						}
					}
					prev = cur;
				}
			}
		}
		expect(found.length).toBeGreaterThan(3);
		const key = (s: BeamSolution) => s.elements.map((e) => `${e.partId}${e.reversed ? 'r' : ''}`).join('+');
		const keyOf = (f: { i: number; j: number }) => [f.i, f.j].map((e) => `${snap.parts[snap.partIndex[e]].partId}${snap.reversed[e] ? 'r' : ''}`).join('+');
		// Symmetric parts have one orientation in the snapshot, so the keys agree.
		const near = (f: { i: number; j: number; p1: number }) => pairs.some((s) => key(s) === keyOf(f) && Math.abs(s.elements[0].firstVertexMm - f.p1) <= 0.26);
		for (const f of found) expect(near(f), `brute force found ${keyOf(f)} at p1 ≈ ${f.p1}`).toBe(true);
		// And every solver answer away from the scan's edges was found by the scan.
		const inner = pairs.filter((s) => s.elements[0].firstVertexMm > 0.5 && s.gapsMm[0] > 1.5 && s.backDistanceMm > 5.5);
		for (const s of inner) expect(found.some((f) => keyOf(f) === key(s) && Math.abs(f.p1 - s.elements[0].firstVertexMm) <= 0.26), `solver answer ${key(s)} at ${s.elements[0].firstVertexMm}`).toBe(true);
	}, 120_000);

	it('the pruned search (branch and bound, limit K) returns exactly the first K of the full answer set', async () => {
		const big = stockOf(syntheticStock(80, 3));
		for (const q of [
			req,
			beamQ({ input: { waistDiameterMm: 1, waistPositionMm: -200, mSquared: 1.3 }, target: { waistDiameterMm: 0.5, waistPositionMm: 400 }, minClearance: 1.5 }),
			beamQ({ input: { waistDiameterMm: 0.006, waistPositionMm: 0 }, target: { waistDiameterMm: 3, waistPositionMm: 400 } })
		]) {
			const full = await solveBeamWithStock(big, { ...q, limit: 50 }, { inline: true, keepAll: true });
			const top = await solveBeamWithStock(big, { ...q, limit: 7 }, { inline: true });
			expect(full.solutions.length).toBeGreaterThan(7);
			const sig = (s: BeamSolution) => `${s.elements.map((e) => `${e.partId}${e.reversed ? 'r' : ''}`).join('+')}@${s.objectDistanceMm.toFixed(6)}`;
			expect(top.solutions.map(sig)).toEqual(full.solutions.slice(0, 7).map(sig));
		}
	}, 120_000);

	it('shards that prune by the best K-th key any shard published return exactly the first K of the full answer set', async () => {
		const big = stockOf(syntheticStock(120, 5));
		for (const q of [
			req,
			beamQ({ input: { waistDiameterMm: 1, waistPositionMm: -200, mSquared: 1.3 }, target: { waistDiameterMm: 0.5, waistPositionMm: 400 }, minClearance: 1.5 }),
			beamQ({ input: { waistDiameterMm: 0.006, waistPositionMm: 0 }, target: { waistDiameterMm: 3, waistPositionMm: 400 } })
		]) {
			const full = await solveBeamWithStock(big, { ...q, limit: 50 }, { inline: true, keepAll: true });
			const alone = await solveBeamWithStock(big, { ...q, limit: 6 }, { inline: true, inlineShards: 3, keepAll: false });
			const sig = (s: BeamSolution) => `${s.elements.map((e) => `${e.partId}${e.reversed ? 'r' : ''}`).join('+')}@${s.objectDistanceMm.toFixed(6)}`;
			expect(full.solutions.length).toBeGreaterThan(6);
			expect(alone.solutions.map(sig)).toEqual(full.solutions.slice(0, 6).map(sig));
		}
	}, 120_000);

	it('a rank key survives its one-number form: order kept, length never rounded down', () => {
		const keys: [number, number, number][] = [
			[1e6, 2, 4.176177352351729],
			[1e6, 2, 4.18],
			[1e6, 1, 0.5],
			[999_999, 2, 0.1],
			[0, 0, 1e5]
		];
		const codes = keys.map(([e, c, l]) => encodeRankKey(e, c, l));
		for (let i = 1; i < codes.length; i++) expect(codes[i - 1] > codes[i]).toBe(true);
		for (const [i, [e, c, l]] of keys.entries()) {
			const [e2, c2, l2] = decodeRankKey(codes[i]);
			expect([e2, c2]).toEqual([e, c]);
			expect(l2).toBeGreaterThanOrEqual(l);
			expect(l2 - l).toBeLessThan(1e-6 * l);
		}
	});

	it('the sorted-column cut changes no answer: same solutions with and without it on seeded random stocks and questions', async () => {
		const rnd = mulberry32(20261203);
		let compared = 0,
			withAnswers = 0;
		try {
			for (const [count, seed] of [
				[150, 11],
				[300, 12],
				[450, 13]
			]) {
				const big = stockOf(syntheticStock(count, seed));
				for (let n = 0; n < 4; n++) {
					const parsed = solveRequestSchema.safeParse({
						mode: 'beam',
						wavelengthNm: [532, 633, 1064][Math.floor(rnd() * 3)],
						input: { waistDiameterMm: 0.3 + 3 * rnd(), waistPositionMm: -200 * rnd(), mSquared: 1 + 0.5 * rnd() },
						target: { waistDiameterMm: 0.02 + 0.8 * rnd(), waistPositionMm: 150 + 250 * rnd() },
						minGapMm: 0.5 + rnd(),
						minWorkingDistanceMm: 2 + 8 * rnd(),
						minClearance: 1 + rnd(),
						limit: 1 + Math.floor(12 * rnd())
					});
					if (!parsed.success) continue;
					const q = parsed.data as ParsedBeamRequest;
					// Full buffer and a small one (several sweeps, each starting from the sampled cap).
					for (const capacity of [1 << 16, 64]) {
						beamKernelOptions.bufferCapacity = capacity;
						beamKernelOptions.columnPruning = false;
						const plain = await solveBeamWithStock(big, q, { inline: true });
						beamKernelOptions.columnPruning = true;
						const cut = await solveBeamWithStock(big, q, { inline: true });
						expect(plain.stats.truncated || cut.stats.truncated).toBe(false);
						expect(cut.solutions).toEqual(plain.solutions);
						expect(cut.noAnswer).toEqual(plain.noAnswer);
						compared++;
						if (plain.solutions.some((s) => s.elements.length === 2)) withAnswers++;
					}
				}
			}
		} finally {
			beamKernelOptions.columnPruning = true;
			beamKernelOptions.bufferCapacity = 1 << 16;
		}
		expect(compared).toBeGreaterThanOrEqual(12);
		expect(withAnswers).toBeGreaterThanOrEqual(8);
	}, 300_000);

	it('a question without an answer says why and shows the nearest miss with its figures', async () => {
		const r = await solveBeamWithStock(stockOf([lens(103, -103, 3, 25.4)]), beamQ({ maxElements: 1, input: { waistDiameterMm: 2, waistPositionMm: -100 }, target: { waistDiameterMm: 0.004, waistPositionMm: 250 } }), {
			inline: true
		});
		expect(r.solutions).toEqual([]);
		expect(r.noAnswer?.nearMiss?.beam.efficiency).toBeLessThan(0.8);
		expect(r.noAnswer?.reason).toMatch(/nearest .* reaches \d+ %/);
		expect(r.noAnswer?.hint).toMatch(/shorter focal length/);
	});

	it('gives the peak irradiance 2P/(πw0²) in W/cm² when a power is given', async () => {
		const r = await solveBeamWithStock(stock, { ...req, powerW: 0.5 }, { inline: true });
		const s = r.solutions[0];
		const wCm = s.beam.outputWaistDiameterMm / 20;
		expect(s.beam.peakIrradianceWPerCm2).toBeCloseTo((2 * 0.5) / (Math.PI * wCm * wCm), 3);
	});
});

describe('mode afocal', () => {
	const parts = [lens(25.8, null, 4), lens(51.7, null, 3.5), lens(null, -129, 3, 50.8), lens(-25.8, null, 2, 12.7), lens(-12.9, null, 2, 12.7), lens(258, null, 3, 50.8)];
	const stock = stockOf(parts);
	it('every answer is afocal by mathjs matrices, within the expansion, length and focus asked; ranked by residual divergence then length', async () => {
		for (const intermediateFocus of [true, false, undefined]) {
			const r = await solveAfocalWithStock(stock, afocalQ({ expansion: 5, expansionTolerance: 0.05, inputBeamDiameterMm: 1, maxLengthMm: 400, intermediateFocus }), { inline: true });
			expect(r.solutions.length).toBeGreaterThan(0);
			for (const s of r.solutions) {
				const [a, b] = s.elements;
				const m1 = mathjsElement(parts.find((p) => p.partId === a.partId)!, a.reversed, 632.8),
					m2 = mathjsElement(parts.find((p) => p.partId === b.partId)!, b.reversed, 632.8);
				const m = mmul(m2, mmul(matrix([[1, s.gapsMm[0]], [0, 1]]), m1)) as Matrix;
				expect(Math.abs(m.get([1, 0]))).toBeLessThan(1e-12);
				expect(Math.abs(m.get([0, 0]))).toBeCloseTo(s.afocal.expansion, 9);
				expect(Math.abs(s.afocal.expansion / 5 - 1)).toBeLessThanOrEqual(0.05);
				expect(s.afocal.lengthMm).toBeLessThanOrEqual(400);
				if (intermediateFocus !== undefined) expect(s.afocal.intermediateFocusMm !== null).toBe(intermediateFocus);
				expect(s.afocal.inverted).toBe(m.get([0, 0]) < 0);
				expect(b.firstVertexMm).toBeCloseTo(a.thicknessMm + s.gapsMm[0], 12);
			}
			for (let k = 1; k < r.solutions.length; k++) {
				const x = r.solutions[k - 1].afocal,
					y = r.solutions[k].afocal;
				expect(Math.round((x.residualDivergenceMrad ?? Infinity) * 1e4)).toBeLessThanOrEqual(Math.round((y.residualDivergenceMrad ?? Infinity) * 1e4));
			}
		}
	});
	it('a Galilean pair (negative first) has no focus between the parts and keeps the image upright', async () => {
		const r = await solveAfocalWithStock(stock, afocalQ({ expansion: 5, expansionTolerance: 0.05, inputBeamDiameterMm: 1, maxLengthMm: 400, intermediateFocus: false }), { inline: true });
		for (const s of r.solutions) {
			expect(s.elements[0].eflMm).toBeLessThan(0);
			expect(s.afocal.inverted).toBe(false);
		}
	});
	it('no answer: the nearest expansion is shown with what would help', async () => {
		const r = await solveAfocalWithStock(stock, afocalQ({ expansion: 7.3, expansionTolerance: 0.01, inputBeamDiameterMm: 1, maxLengthMm: 400 }), { inline: true });
		expect(r.solutions).toEqual([]);
		expect(r.noAnswer?.nearMiss).not.toBeNull();
		expect(r.noAnswer?.hint).toMatch(/nearest expansion from stock is/);
	});
});

describe('request validation of the beam modes', () => {
	const fields = (body: unknown) => {
		const r = solveRequestSchema.safeParse(body);
		return r.success ? {} : zodFields(r.error);
	};
	const base = { mode: 'beam', wavelengthNm: 1064, input: { waistDiameterMm: 2, waistPositionMm: -100 }, target: { waistDiameterMm: 0.04, waistPositionMm: 250 } };
	it('names the field of a waist ≤ 0, an M² below 1, an unreachable target and a multimode fibre', () => {
		expect(fields({ ...base, input: { waistDiameterMm: 0, waistPositionMm: 0 } })['input.waistDiameterMm']).toMatch(/larger than 0/);
		expect(fields({ ...base, input: { waistDiameterMm: 2, waistPositionMm: 0, mSquared: 0.9 } })['input.mSquared']).toMatch(/below 1/);
		expect(fields({ ...base, target: { waistDiameterMm: 0.0005, waistPositionMm: 250 } })['target.waistDiameterMm']).toMatch(/cannot be reached/);
		expect(fields({ ...base, target: { waistDiameterMm: 0.04, waistPositionMm: 3 } })['target.waistPositionMm']).toMatch(/cannot be reached/);
		expect(fields({ ...base, target: { waistPositionMm: 250, fibre: { coreDiameterMm: 0.009, numericalAperture: 0.14 } } })['target.fibre.coreDiameterMm']).toMatch(/more than one mode/);
		expect(fields({ ...base, target: { waistPositionMm: 250 } })['target.waistDiameterMm']).toMatch(/one of the two/);
		expect(fields({ ...base, minClearance: 0.5 }).minClearance).toMatch(/at least 1/);
		expect(fields({ ...base, mode: 'laser' }).mode).toMatch(/"imaging", "beam" or "afocal"/);
	});
	it('afocal: an expansion of 1 and a missing length are refused by name; imaging stays the default mode', () => {
		expect(fields({ mode: 'afocal', wavelengthNm: 632.8, expansion: 1, inputBeamDiameterMm: 1, maxLengthMm: 300 }).expansion).toMatch(/changes nothing/);
		expect(fields({ mode: 'afocal', wavelengthNm: 632.8, expansion: 3, inputBeamDiameterMm: 1 }).maxLengthMm).toBeDefined();
		const r = solveRequestSchema.parse({ trackMm: 300, magnification: -0.5, objectNA: 0.05 });
		expect(r.mode).toBe('imaging');
	});
});
