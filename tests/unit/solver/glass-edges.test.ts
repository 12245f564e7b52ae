/**
 * Glass edges never overlap: the solver's touching check runs to the outer diameter of the
 * parts, not only to their clear apertures. Every returned pair is re-checked here by an
 * independent sag computation (sphere heights sampled from the axis to the smaller glass edge,
 * written out in this file), so the check does not lean on the monotonicity argument of
 * `minAirGapMm`.
 *
 * Sag of a sphere: z(y) = R − sign(R)·√(R² − y²) (Hecht, Optics, 5th ed. 2017, §5.2, the
 * spherical surface; from memory). The rest is geometry of the bench: common practice, no source.
 */
import { describe, expect, it } from 'vitest';
import { solveWithStock } from '../../../src/lib/server/solver/solve';
import { solveAfocalWithStock } from '../../../src/lib/server/solver/beam-solve';
import { imagingRequestSchema, solveRequestSchema, type ParsedAfocalRequest } from '../../../src/lib/solver/request';
import type { CandidatePart } from '../../../src/lib/server/solver/elements';
import { buildElementSnapshot } from '../../../src/lib/server/solver/elements';
import { checkPairPhysical, EL_EDGE_SEMI_DIAMETER, ELEMENT_STRIDE, PHYS_SURFACES_TOUCH } from '../../../src/lib/optics';
import type { Solution } from '../../../src/lib/solver/types';
import { lensMaker } from './test-lens';

const { lens, stockOf } = lensMaker({ firstId: 9000, prefix: 'EDGE', name: 'Edge test lens', kind: 'biconvex', available: 2, drawer: { code: 'E1', name: 'Edge drawer' } });

/** Independent sag (mm) of a sphere of radius r (null: flat) at height y. */
function sag(r: number | null, y: number): number {
	if (r === null) return 0;
	return r - Math.sign(r) * Math.sqrt(r * r - y * y);
}

/** The surfaces of a part as they stand in a solution (reversed: order turned and radii negated). */
function outerRadii(part: CandidatePart, reversed: boolean): { front: number | null; back: number | null } {
	const r = part.surfaces.map((s) => s.radiusMm);
	const front = reversed ? r[r.length - 1] : r[0];
	const back = reversed ? r[0] : r[r.length - 1];
	const neg = (x: number | null) => (x === null ? null : -x);
	return reversed ? { front: neg(front), back: neg(back) } : { front, back };
}

/** Smallest axial air gap (mm) between the two parts of a solution, over heights 0..smaller outer radius, sampled. */
function smallestAirGap(s: Solution, parts: CandidatePart[]): number {
	const [e1, e2] = s.elements;
	const p1 = parts.find((p) => p.partId === e1.partId)!;
	const p2 = parts.find((p) => p.partId === e2.partId)!;
	const back1 = outerRadii(p1, e1.reversed).back;
	const front2 = outerRadii(p2, e2.reversed).front;
	const zBack1 = e1.firstVertexMm + e1.thicknessMm;
	const zFront2 = e2.firstVertexMm;
	const yMax = Math.min(p1.diameterMm, p2.diameterMm) / 2;
	let least = Infinity;
	for (let k = 0; k <= 2000; k++) {
		const y = (yMax * k) / 2000;
		least = Math.min(least, zFront2 + sag(front2, y) - (zBack1 + sag(back1, y)));
	}
	return least;
}


describe('glass edges never overlap', () => {
	it('issue example: two units of R 50 / −50, t 5, Ø 25.4 at m −3 over 147.5 mm, minimum gap 0: no answer overlaps', async () => {
		const part = lens(50, -50, 5, 25.4, 2);
		const q = imagingRequestSchema.parse({ trackMm: 147.5, magnification: -3, objectNA: 0.02, minGapMm: 0, minWorkingDistanceMm: 2, limit: 50 });
		const res = await solveWithStock(stockOf([part]), q, { inline: true, keepAll: true });
		const pairs = res.solutions.filter((s) => s.elements.length === 2);
		expect(pairs.length).toBeGreaterThan(0);
		for (const s of pairs) expect(smallestAirGap(s, [part]), `gap ${s.gapsMm[0]} mm`).toBeGreaterThan(0);
	});

	it('concave faces towards each other: the answer whose glass edges overlapped is no longer returned', async () => {
		// Two units of a positive meniscus R 20 / 50, t 6, Ø 25.4, the second turned round, so the
		// two R 50 faces (concave) face each other and their edges come closer than their vertices.
		// Before the fix, m −2 over 158 mm with minimum gap 0 returned a vertex gap of 3.047 mm: the
		// rims kept 0.399 mm at the clear aperture (90 % of the diameter) but the glass edges
		// overlapped by 0.233 mm (the same kind of overlap as the 3.017 mm gap, 0.26 mm).
		const part = lens(20, 50, 6, 25.4, 2);
		const q = imagingRequestSchema.parse({ trackMm: 158, magnification: -2, objectNA: 0.02, minGapMm: 0, minWorkingDistanceMm: 2, limit: 50 });
		const res = await solveWithStock(stockOf([part]), q, { inline: true, keepAll: true });
		const pairs = res.solutions.filter((s) => s.elements.length === 2);
		expect(pairs.length).toBeGreaterThan(0); // the other arrangements still image
		for (const s of pairs) expect(smallestAirGap(s, [part]), `${s.elements.map((e) => e.reversed).join(',')} gap ${s.gapsMm[0]}`).toBeGreaterThan(0);
		expect(pairs.some((s) => !s.elements[0].reversed && s.elements[1].reversed)).toBe(false);
		// The old answer by the independent sags: edges −0.233 mm apart, rims at the clear aperture +0.399 mm.
		const g = 3.047;
		expect(g + sag(-50, 12.7) - sag(50, 12.7)).toBeCloseTo(-0.232, 2);
		expect(g + sag(-50, 11.43) - sag(50, 11.43)).toBeCloseTo(0.4, 2);
		// One step longer track (158.5 mm) the gap is 3.476 mm and the edges clear by 0.197 mm: returned.
		const q2 = imagingRequestSchema.parse({ ...q, trackMm: 158.5 });
		const res2 = await solveWithStock(stockOf([part]), q2, { inline: true, keepAll: true });
		const facing = res2.solutions.filter((s) => s.elements.length === 2 && !s.elements[0].reversed && s.elements[1].reversed);
		expect(facing).toHaveLength(1);
		expect(smallestAirGap(facing[0], [part])).toBeCloseTo(0.197, 2);
	});

	it('agrees with an independent sampled sag check for every returned pair on a mixed stock', async () => {
		// Convex and concave faces of several diameters, so both the equal-edge and the
		// smaller-edge branches of the check are exercised.
		const parts = [
			lens(50, -50, 5, 25.4, 2),
			lens(30, -30, 6, 25.4, 2),
			lens(40, null, 4, 12.7, 2),
			lens(-60, 60, 2.5, 25.4, 2),
			lens(100, -100, 4, 50.8, 2),
			lens(25, 80, 5, 25.4, 2)
		];
		for (const [m, track] of [
			[-3, 147.5],
			[-1, 200],
			[-0.5, 160],
			[-2, 260]
		]) {
			const q = imagingRequestSchema.parse({ trackMm: track, magnification: m, objectNA: 0.02, minGapMm: 0, minWorkingDistanceMm: 2, limit: 50 });
			const res = await solveWithStock(stockOf(parts), q, { inline: true, keepAll: true });
			for (const s of res.solutions.filter((x) => x.elements.length === 2)) {
				expect(smallestAirGap(s, parts), `m ${m}, ${s.elements.map((e) => e.sku).join(' + ')}, gap ${s.gapsMm[0]}`).toBeGreaterThan(-1e-9);
			}
		}
	});

	it('the physical filter refuses a gap where only the glass edges touch, and accepts it once the edges clear', () => {
		const part = lens(20, 50, 6, 25.4);
		const snap = buildElementSnapshot([part], 587.6); // element 0 as catalogued, element 1 turned round
		expect(snap.packed[EL_EDGE_SEMI_DIAMETER]).toBeCloseTo(12.7, 12);
		expect(snap.packed.length).toBe(2 * ELEMENT_STRIDE);
		const touchAtEdge = 2 * sag(50, 12.7); // vertex gap at which the two R 50 faces meet at Ø 25.4
		const touchAtClear = 2 * sag(50, 0.9 * 12.7);
		// Between the two: rims apart at the clear aperture, glass edges overlapping.
		const g = (touchAtEdge + touchAtClear) / 2;
		expect(checkPairPhysical(snap.packed, 0, 1, 10, g, 10, 2, 0) & PHYS_SURFACES_TOUCH).toBe(PHYS_SURFACES_TOUCH);
		expect(checkPairPhysical(snap.packed, 0, 1, 10, touchAtEdge + 1e-6, 10, 2, 0)).toBe(0);
		// A smaller part behind: the check runs to its edge (Ø 12.7), where the R 50 faces are closer than 1e-3 mm apart only below 2·sag(50, 6.35).
		const small = lens(-50, -20, 6, 12.7);
		const snap2 = buildElementSnapshot([part, small], 587.6);
		const k = snap2.partIndex.findIndex((p, e) => p === 1 && snap2.reversed[e] === 0);
		const touchSmall = 2 * sag(50, 6.35);
		expect(checkPairPhysical(snap2.packed, 0, k, 10, touchSmall - 1e-3, 10, 2, 0) & PHYS_SURFACES_TOUCH).toBe(PHYS_SURFACES_TOUCH);
		expect(checkPairPhysical(snap2.packed, 0, k, 10, touchSmall + 1e-3, 10, 2, 0)).toBe(0);
	});

	it('expanders: a Galilean pair keeps its glass apart to the edges, and a strongly concave first face is no reason to refuse it', async () => {
		// A plano-concave part R −10 mm, Ø 12.7 (its concave face dips 2.3 mm at the edge) before a
		// plano-convex R 51.7 mm part: a 5× expander without a focus. An expander has no object
		// plane, so the dip of its first face must not count against it.
		const neg = lens(-10, null, 2, 12.7, 1);
		neg.kind = 'plano-concave';
		const pos = lens(51.7, null, 4, 25.4, 1);
		const parts = [neg, pos];
		const q = solveRequestSchema.parse({ mode: 'afocal', wavelengthNm: 632.8, expansion: 5, expansionTolerance: 0.1, inputBeamDiameterMm: 1, maxLengthMm: 200, minGapMm: 0, limit: 50 }) as ParsedAfocalRequest;
		const r = await solveAfocalWithStock(stockOf(parts), q, { inline: true });
		const galilean = r.solutions.filter((s) => s.afocal.intermediateFocusMm === null);
		expect(galilean.length).toBeGreaterThan(0);
		// Concave face first (as catalogued) is one of the answers, not only the part turned round.
		expect(galilean.some((s) => s.elements[0].partId === neg.partId && !s.elements[0].reversed)).toBe(true);
		for (const s of r.solutions) {
			const [e1, e2] = s.elements;
			const p1 = parts.find((p) => p.partId === e1.partId)!;
			const p2 = parts.find((p) => p.partId === e2.partId)!;
			const back1 = outerRadii(p1, e1.reversed).back;
			const front2 = outerRadii(p2, e2.reversed).front;
			const yMax = Math.min(p1.diameterMm, p2.diameterMm) / 2;
			let least = Infinity;
			for (let k = 0; k <= 1000; k++) {
				const y = (yMax * k) / 1000;
				least = Math.min(least, s.gapsMm[0] + sag(front2, y) - sag(back1, y));
			}
			expect(least).toBeGreaterThan(0);
		}
	});
});
