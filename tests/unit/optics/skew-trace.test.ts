/**
 * The real-ray spot figures checked against an independent three-dimensional skew-ray trace written
 * here: rays meet each sphere by the quadratic about its centre of curvature (|P + tD − C|² = R², the
 * root on the vertex side), refract by Snell's law in vector form (D' = μD + (μ cos I − cos I')N,
 * Hecht, Optics, 5th ed. 2017, §4.4, from memory), and are lost outside a semi-aperture (half the
 * clear aperture, 90 % of the diameter when none is stated: the solver's rule), when they miss a
 * sphere, or when t < 0 (the surface lies behind). The product traces from the vertex tangent plane
 * with t = F/(B + √(B² − cF)); the two must agree to rounding.
 */
import { describe, expect, it } from 'vitest';
import {
	traceSystemFromLayout,
	traceSkewRay,
	traceSkewRayPair,
	traceRay,
	startRay,
	fieldGridSpot,
	pupilSpot,
	edgePupil,
	axialCone,
	stopChiefSine,
	refractiveIndex,
	RAY_STRIDE,
	SKEW_STRIDE,
	TRACE_OK,
	TRACE_CLIPPED,
	TRACE_BEHIND,
	TRACE_MISSED,
	TRACE_TIR,
	type Layout
} from '../../../src/lib/optics';
import { solveWithStock } from '../../../src/lib/server/solver/solve';
import { evaluatePlacement } from '../../../src/lib/server/solver/evaluate';
import { partElement } from '../../../src/lib/server/solver/elements';
import { layoutMatrix, imageAfter, create } from '../../../src/lib/optics';
import { imagingRequestSchema } from '../../../src/lib/solver/request';
import type { Solution } from '../../../src/lib/solver/types';
import { element, singlet } from './helpers';
import { RELAY_QUESTION, relayParts } from '../solver/examples';
import { edgeTrace, EDGE_GRID, EDGE_RINGS, EDGE_SPOKES } from '../../../src/lib/solver/search/field-edge';

/** One surface of the independent model: vertex z, radius (null flat), index after, semi-aperture. */
interface Surf {
	z: number;
	r: number | null;
	nAfter: number;
	semi: number;
}

/** The surfaces of a solution, from its positions and the parts' prescriptions (not from the solver's elements). */
function surfacesOf(s: Solution, parts: ReturnType<typeof relayParts>, wavelengthNm: number): Surf[] {
	const out: Surf[] = [];
	for (const e of s.elements) {
		const part = parts.find((p) => p.partId === e.partId)!;
		const semi = (part.clearApertureMm ?? 0.9 * part.diameterMm) / 2;
		const spec = part.surfaces;
		const n = spec.length;
		let z = e.firstVertexMm;
		for (let k = 0; k < n; k++) {
			// Turned round: surfaces in the opposite order, radii negated, each medium between the same two surfaces.
			const src = e.reversed ? spec[n - 1 - k] : spec[k];
			const r = src.radiusMm === null ? null : e.reversed ? -src.radiusMm : src.radiusMm;
			const medium = k === n - 1 ? null : e.reversed ? spec[n - 2 - k] : spec[k];
			const nAfter = medium ? refractiveIndex(medium.material ?? null, wavelengthNm) : 1;
			out.push({ z, r, nAfter, semi });
			if (medium) z += medium.thicknessMm ?? 0;
		}
	}
	return out;
}

type V = [number, number, number];
const dot = (a: V, b: V) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];

/** Independent trace of one ray from (0, h, 0) with direction (L, M, N); the landing point (x, y) at zImg, or null when lost. */
function traceIndependent(surfs: Surf[], h: number, d0: V, zImg: number, allowBehind = false): [number, number] | null {
	let p: V = [0, h, 0];
	let d: V = d0;
	let n1 = 1;
	for (const s of surfs) {
		let t: number;
		let normal: V;
		if (s.r === null) {
			t = (s.z - p[2]) / d[2];
			normal = [0, 0, -1];
		} else {
			const c: V = [0, 0, s.z + s.r];
			const pc: V = [p[0] - c[0], p[1] - c[1], p[2] - c[2]];
			const b = dot(d, pc);
			const disc = b * b - (dot(pc, pc) - s.r * s.r);
			if (disc < 0) return null;
			const roots = [-b - Math.sqrt(disc), -b + Math.sqrt(disc)];
			// The vertex-side hemisphere: the hit lies on the side of the centre where the vertex is.
			const pick = roots.find((tt) => (p[2] + tt * d[2] - c[2]) * s.r! < 0);
			if (pick === undefined) return null;
			t = pick;
			const hit: V = [p[0] + t * d[0], p[1] + t * d[1], p[2] + t * d[2]];
			normal = [(hit[0] - c[0]) / s.r, (hit[1] - c[1]) / s.r, (hit[2] - c[2]) / s.r]; // points to −z at the vertex
		}
		if (t < -1e-9 && !allowBehind) return null;
		p = [p[0] + t * d[0], p[1] + t * d[1], p[2] + t * d[2]];
		if (Math.hypot(p[0], p[1]) > s.semi) return null;
		const mu = n1 / s.nAfter;
		const cosI = -dot(normal, d);
		const sin2t = mu * mu * (1 - cosI * cosI);
		if (sin2t > 1) return null;
		const cosT = Math.sqrt(1 - sin2t);
		d = [mu * d[0] + (mu * cosI - cosT) * normal[0], mu * d[1] + (mu * cosI - cosT) * normal[1], mu * d[2] + (mu * cosI - cosT) * normal[2]];
		n1 = s.nAfter;
	}
	const t = (zImg - p[2]) / d[2];
	return [p[0] + t * d[0], p[1] + t * d[1]];
}

/** RMS radius about the centroid of points (equal weights). */
function rmsAboutCentroid(pts: [number, number][]): number {
	const mx = pts.reduce((a, q) => a + q[0], 0) / pts.length,
		my = pts.reduce((a, q) => a + q[1], 0) / pts.length;
	return Math.sqrt(pts.reduce((a, q) => a + (q[0] - mx) ** 2 + (q[1] - my) ** 2, 0) / pts.length);
}

/**
 * Dense sampling of a cone of direction sines (radius `radius` around the chief direction sine):
 * an m × m grid of cell centres over the whole disc (no symmetry used). Returns the landing points
 * and the fraction of the disc's cells that arrive.
 */
function denseCone(surfs: Surf[], h: number, sinChief: number, radius: number, zImg: number, m: number) {
	const pts: [number, number][] = [];
	let all = 0;
	for (let i = 0; i < m; i++) {
		for (let j = 0; j < m; j++) {
			const px = -1 + (2 * i + 1) / m,
				py = -1 + (2 * j + 1) / m;
			if (px * px + py * py > 1) continue;
			all++;
			const L = radius * px,
				M = sinChief + radius * py;
			const q = traceIndependent(surfs, h, [L, M, Math.sqrt(1 - L * L - M * M)], zImg);
			if (q) pts.push(q);
		}
	}
	return { pts, passed: pts.length / all };
}

async function relayAnswer() {
	const parts = relayParts();
	const r = await solveWithStock({ key: `relay-skew-${Math.random()}`, parts }, imagingRequestSchema.parse(RELAY_QUESTION), { inline: true });
	const s = r.solutions.find((x) => x.elements.length === 2 && x.elements[0].partId === 1 && !x.elements[0].reversed && !x.elements[1].reversed && Math.abs(x.objectDistanceMm - 472.77) < 0.05)!;
	return { s, surfs: surfacesOf(s, parts, RELAY_QUESTION.wavelengthNm) };
}

describe('the product trace against the independent one, ray by ray', () => {
	it('skew rays land at the same point or are lost at the same surface (relay of the regression example)', async () => {
		const { s } = await relayAnswer();
		const parts = relayParts();
		const surfs = surfacesOf(s, parts, 632.8);
		const layoutSys = traceSystemFromLayout(
			{
				objectDistanceMm: s.objectDistanceMm,
				gapsMm: s.gapsMm,
				backDistanceMm: s.backDistanceMm,
				elements: s.elements.map((e) => element(parts.find((p) => p.partId === e.partId)!.surfaces, 632.8, 0.9 * parts.find((p) => p.partId === e.partId)!.diameterMm, e.reversed))
			} satisfies Layout,
			s.elements.map((e) => parts.find((p) => p.partId === e.partId)!.diameterMm)
		);
		if (!layoutSys.ok) throw layoutSys.error;
		const sys = layoutSys.value;
		const ray = new Float64Array(SKEW_STRIDE);
		let arrived = 0,
			lost = 0;
		for (let k = 0; k < 400; k++) {
			const L = 0.06 * Math.cos(k * 2.39996) * Math.sqrt(k / 400),
				M = -0.006 + 0.06 * Math.sin(k * 2.39996) * Math.sqrt(k / 400);
			const N = Math.sqrt(1 - L * L - M * M);
			ray.set([0, 3, 0, L, M, N, 0, 0]);
			const st = traceSkewRay(sys, ray);
			const ind = traceIndependent(surfs, 3, [L, M, N], s.trackMm);
			expect(st === TRACE_OK).toBe(ind !== null);
			if (st === TRACE_OK && ind) {
				arrived++;
				const t = (s.trackMm - ray[2]) / ray[5];
				expect(ray[0] + t * ray[3]).toBeCloseTo(ind[0], 9);
				expect(ray[1] + t * ray[4]).toBeCloseTo(ind[1], 9);
			} else lost++;
		}
		expect(arrived).toBeGreaterThan(20);
		expect(lost).toBeGreaterThan(20);
	});

	it('two skew rays traced together (traceSkewRayPair) end exactly as each alone, whichever of them passes or is lost, and how', () => {
		const sysOf = (layout: Layout) => {
			const r = traceSystemFromLayout(layout);
			if (!r.ok) throw r.error;
			return r.value;
		};
		const systems = [
			sysOf({ objectDistanceMm: 60, elements: [element(singlet(50, -50, 5), 587.6, 12), element(singlet(40, null, 4, '785257'), 587.6, 9)], gapsMm: [8], backDistanceMm: 40 }),
			sysOf({ objectDistanceMm: 4, elements: [element(singlet(6, -6, 5))], gapsMm: [], backDistanceMm: 20 }),
			sysOf({ objectDistanceMm: 5, elements: [element([{ radiusMm: null, thicknessMm: 10, material: '517642' }, { radiusMm: -10 }])], gapsMm: [], backDistanceMm: 30 })
		];
		const heights = [2, 0.5, 8.5];
		const statuses = new Set<number>();
		const start = (r: Float64Array, h: number, L: number, M: number) => r.set([0.3 * L, h, 0, L, M, Math.sqrt(1 - L * L - M * M), 0, 0]);
		for (const [n, sys] of systems.entries()) {
			for (let k = 0; k < 300; k++) {
				const L = 0.7 * Math.cos(k * 2.39996) * Math.sqrt(k / 300),
					M = 0.7 * Math.sin(k * 2.39996) * Math.sqrt(k / 300);
				const one = new Float64Array(SKEW_STRIDE),
					two = new Float64Array(SKEW_STRIDE),
					pa = new Float64Array(SKEW_STRIDE),
					pb = new Float64Array(SKEW_STRIDE);
				start(one, heights[n], L, M);
				start(two, -heights[n] * 0.9, -M * 0.8, L * 0.9);
				pa.set(one);
				pb.set(two);
				traceSkewRay(sys, one);
				traceSkewRay(sys, two);
				traceSkewRayPair(sys, pa, pb);
				expect(Array.from(pa)).toEqual(Array.from(one));
				expect(Array.from(pb)).toEqual(Array.from(two));
				statuses.add(one[6]).add(two[6]);
			}
		}
		expect([...statuses].sort()).toEqual([TRACE_OK, TRACE_MISSED, TRACE_TIR, TRACE_CLIPPED, TRACE_BEHIND].sort());
	});

	it('a meridional skew ray (x = 0) agrees with the meridional trace; a clipped ray and a ray behind a surface are lost with their status', () => {
		const e = element(singlet(51.5, -51.5, 4.2), 587.6, 20);
		const sysR = traceSystemFromLayout({ objectDistanceMm: 80, elements: [e], gapsMm: [], backDistanceMm: 120 }, [25.4]);
		if (!sysR.ok) throw sysR.error;
		const sys = sysR.value;
		expect(sys.semiApertureMm[0]).toBe(10); // clear aperture 20 mm inside a 25.4 mm part
		const m = new Float64Array(RAY_STRIDE),
			k = new Float64Array(SKEW_STRIDE);
		startRay(m, 2, 0.08);
		traceRay(sys, m);
		k.set([0, 2, 0, 0, 0.08, Math.sqrt(1 - 0.0064), 0, 0]);
		traceSkewRay(sys, k);
		expect(k[1]).toBeCloseTo(m[1], 12);
		expect(k[4]).toBeCloseTo(m[3], 14);
		// 0.2 in direction sine reaches the first surface at about 16 mm > 10 mm: clipped there.
		startRay(m, 0, 0.2);
		expect(traceRay(sys, m)).toBe(TRACE_CLIPPED);
		expect(m[5]).toBe(0);
		// Surfaces that cross: a 0.1 mm "lens" of R 20 / −20 has none of its second surface ahead of the first at 5 mm.
		const thin = element(singlet(20, -20, 0.1), 587.6);
		const crossed = traceSystemFromLayout({ objectDistanceMm: 50, elements: [thin], gapsMm: [], backDistanceMm: 50 });
		if (!crossed.ok) throw crossed.error;
		const ray = new Float64Array([0, 5, 1, 0, 0, 0]);
		expect(traceRay(crossed.value, ray)).toBe(TRACE_BEHIND);
		expect(ray[5]).toBe(1);
	});
});

describe('spot figures against the independent trace', () => {
	it('fieldGridSpot: the same grid rule (16 cells across, mirrored about the meridional plane) gives the same RMS radius about the centroid', async () => {
		const { s, surfs } = await relayAnswer();
		const parts = relayParts();
		const sysR = traceSystemFromLayout(
			{
				objectDistanceMm: s.objectDistanceMm,
				gapsMm: s.gapsMm,
				backDistanceMm: s.backDistanceMm,
				elements: s.elements.map((e) => element(parts.find((p) => p.partId === e.partId)!.surfaces, 632.8, 0.9 * parts.find((p) => p.partId === e.partId)!.diameterMm, e.reversed))
			},
			[31, 44.3]
		);
		if (!sysR.ok) throw sysR.error;
		const sinChief = -3 / Math.hypot(s.objectDistanceMm, 3);
		for (const radius of [0.01, 0.03, 0.1]) {
			const g = fieldGridSpot(sysR.value, 3, { sinChief, radiusSine: radius, grid: 16 });
			const pts: [number, number][] = [];
			let all = 0;
			for (let i = 0; i < 8; i++) {
				for (let j = 0; j < 16; j++) {
					const px = (i + 0.5) / 8,
						py = -1 + (j + 0.5) / 8;
					if (px * px + py * py > 1) continue;
					all += 2;
					for (const sx of [1, -1]) {
						const L = sx * radius * px,
							M = sinChief + radius * py;
						const q = traceIndependent(surfs, 3, [L, M, Math.sqrt(1 - L * L - M * M)], s.trackMm);
						if (q) pts.push(q);
					}
				}
			}
			expect(g.raysTraced * 2).toBe(pts.length);
			expect(g.passedFraction).toBeCloseTo(pts.length / all, 12);
			if (pts.length) expect(g.rmsAboutCentroidMm).toBeCloseTo(rmsAboutCentroid(pts), 9);
		}
	});

	it('the solution figures of the regression example agree with a dense independent sampling of the requested cone', async () => {
		const { s, surfs } = await relayAnswer();
		// Axis: the requested cone (NA 0.1) on a 400 × 400 grid, rays clipped; about 11,000 of 126,000 arrive.
		const axis = denseCone(surfs, 0, 0, 0.1, s.trackMm, 400);
		expect(s.vignetting.axialLostFraction!).toBeCloseTo(1 - axis.passed, 2);
		expect(s.spot.axialRmsMm! / rmsAboutCentroid(axis.pts)).toBeCloseTo(1, 2);
		// Field edge: the same around the chief ray through the centre of the stop (the convex surface of the first
		// part), found here by bisection on its height there with the independent trace.
		const stopSurf = surfs.slice(0, 2);
		const heightAtStop = (u: number) => {
			const z = stopSurf[1].z;
			const q = traceIndependent(stopSurf.map((x) => ({ ...x, semi: Infinity })), 3, [0, u, Math.sqrt(1 - u * u)], z);
			return q![1];
		};
		let lo = -0.02,
			hi = 0;
		for (let i = 0; i < 60; i++) {
			const mid = (lo + hi) / 2;
			if (heightAtStop(mid) > 0) hi = mid;
			else lo = mid;
		}
		const edge = denseCone(surfs, 3, lo, 0.1, s.trackMm, 400);
		// The product counts the edge's cone on a 16-cell grid: its resolution here is about 1 % of the requested cone.
		expect(Math.abs(s.vignetting.edgeLostFraction! - (1 - edge.passed))).toBeLessThan(0.01);
		expect(s.spot.edgeRmsMm! / rmsAboutCentroid(edge.pts)).toBeGreaterThan(0.97);
		expect(s.spot.edgeRmsMm! / rmsAboutCentroid(edge.pts)).toBeLessThan(1.03);
	});

	it('a field edge with its whole cone passing (coma and astigmatism at 8 mm off axis) agrees with a dense independent sampling', () => {
		const part = { ...relayParts()[1], partId: 9, sku: 'EX-9' };
		const built = partElement(part, 587.6);
		if (!built.ok) throw new Error(built.reason);
		const e = built.element;
		const s0 = 300;
		const img = imageAfter(layoutMatrix(create(), { objectDistanceMm: s0, elements: [e], gapsMm: [], backDistanceMm: 0 }))!;
		const track = s0 + e.thicknessMm + img.imageDistanceMm;
		const ev = evaluatePlacement(
			{ parts: [part], elements: [e], objectDistanceMm: s0, gapsMm: [], backDistanceMm: img.imageDistanceMm, targetMagnification: img.magnification, afocalFamily: false, doubleRoot: false, screenEstimateMm: 0 },
			{ wavelengthNm: 587.6, trackMm: track, objectNA: 0.03, objectHeightMm: 8 },
			[false]
		).solution;
		expect(ev.vignetting.axialLostFraction).toBe(0);
		expect(ev.vignetting.edgeLostFraction!).toBeLessThan(1e-9);
		const surfs: Surf[] = [
			{ z: s0, r: 181, nAfter: refractiveIndex('785257', 587.6), semi: 0.9 * 44.3 / 2 },
			{ z: s0 + 8.49, r: -330.3, nAfter: 1, semi: 0.9 * 44.3 / 2 }
		];
		// The chief ray through the centre of the stop the product names, by bisection with the independent trace.
		const stop = ev.vignetting.stop!.surface - 1;
		const at = (u: number) => traceIndependent(surfs.slice(0, stop + 1).map((x) => ({ ...x, semi: Infinity })), 8, [0, u, Math.sqrt(1 - u * u)], surfs[stop].z)![1];
		let lo = -0.06,
			hi = 0;
		for (let i = 0; i < 60; i++) {
			const mid = (lo + hi) / 2;
			if (at(mid) > 0) hi = mid;
			else lo = mid;
		}
		const dense = denseCone(surfs, 8, lo, 0.03, track, 300);
		expect(dense.passed).toBe(1);
		expect(ev.spot.edgeRmsMm! / rmsAboutCentroid(dense.pts)).toBeCloseTo(1, 2);
		expect(ev.spot.edgeRmsMm!).toBeGreaterThan(1.05 * ev.spot.axialRmsMm!); // off-axis aberrations add to the axial spot
	});

	it('the audit figure 0.043 mm is the same cone sampled by the 3 of 32 equal-area rings of the requested cone that pass', async () => {
		const { s, surfs } = await relayAnswer();
		const ys: number[] = [];
		for (let k = 1; k <= 32; k++) {
			const u = Math.sqrt((k - 0.5) / 32) * 0.1;
			const q = traceIndependent(surfs, 0, [0, u, Math.sqrt(1 - u * u)], s.trackMm);
			if (q) ys.push(q[1]);
		}
		expect(ys).toHaveLength(3);
		// 0.0425 mm, quoted as 0.043 mm; the 32 rings over the cone that passes give the finer 0.0387 mm of the solution.
		expect(Math.abs(Math.sqrt(ys.reduce((a, y) => a + y * y, 0) / ys.length) - 0.043)).toBeLessThan(0.001);
		expect(s.spot.axialRmsMm!).toBeCloseTo(0.0387, 4);
		// Without the apertures, and going on past surfaces met behind, the same rings give the audit's 1.596 mm.
		const open = surfs.map((x) => ({ ...x, semi: Infinity }));
		const all: number[] = [];
		for (let k = 1; k <= 32; k++) {
			const u = Math.sqrt((k - 0.5) / 32) * 0.1;
			const q = traceIndependent(open, 0, [0, u, Math.sqrt(1 - u * u)], s.trackMm, true);
			if (q) all.push(q[1]);
		}
		expect(Math.sqrt(all.reduce((a, y) => a + y * y, 0) / all.length)).toBeCloseTo(1.596, 2);
	});
});

describe('the aperture stop (geometry and Snell: height 100·tan θ + 5·tan θ′ with sin θ′ = sin θ/n at the back face of a window; common practice, no source)', () => {
	it('a window stops the cone at its back face (the ray still rises in the glass); a smaller second part further on takes over as the stop', () => {
		const win = element([{ radiusMm: null, thicknessMm: 5, material: '517642' }, { radiusMm: null }], 587.6, 10);
		const one = traceSystemFromLayout({ objectDistanceMm: 100, elements: [win], gapsMm: [], backDistanceMm: 50 });
		if (!one.ok) throw one.error;
		const n = refractiveIndex('517642', 587.6);
		const height = (u: number) => 100 * Math.tan(Math.asin(u)) + 5 * Math.tan(Math.asin(u / n));
		let lo = 0,
			hi = 0.2;
		for (let i = 0; i < 80; i++) {
			const mid = (lo + hi) / 2;
			if (height(mid) < 5) lo = mid;
			else hi = mid;
		}
		const cone = axialCone(one.value, 0.2);
		expect(cone.stopSurface).toBe(1);
		expect(cone.passedSine).toBeCloseTo(lo, 9);
		expect(cone.lostFraction).toBeCloseTo(1 - (cone.passedSine / 0.2) ** 2, 12);
		// Asked for less than the window passes: nothing lost, the stop is still the window's first face.
		expect(axialCone(one.value, 0.01)).toMatchObject({ passedSine: 0.01, lostFraction: 0, stopSurface: 1 });
		// A 4 mm window 100 mm further on: the ray through the rim of its back face has 200·tan θ + 6·tan θ′ = 2.
		const small = element([{ radiusMm: null, thicknessMm: 1, material: '517642' }, { radiusMm: null }], 587.6, 4);
		const two = traceSystemFromLayout({ objectDistanceMm: 100, elements: [win, small], gapsMm: [100], backDistanceMm: 50 });
		if (!two.ok) throw two.error;
		const c2 = axialCone(two.value, 0.2);
		expect(c2.stopSurface).toBe(3);
		expect(c2.passedSine).toBeGreaterThan(2 / 206);
		expect(c2.passedSine).toBeLessThan(2 / 200);
		// The chief ray of a field point crosses the axis at the stop's centre.
		const u = stopChiefSine(two.value, 3, c2.stopSurface);
		const ray = new Float64Array(RAY_STRIDE);
		const hts = new Float64Array(4);
		startRay(ray, 3, u);
		traceRay(two.value, ray, hts, false);
		expect(Math.abs(hts[3])).toBeLessThan(1e-9);
	});
});

describe('the field edge as the rank bound traces it (the same rays, stopped early or not traced twice)', () => {
	/** A single part of the regression example imaging at 300 mm, traced with its field edge at h mm. */
	function single(h: number) {
		const part = { ...relayParts()[1], partId: 9, sku: 'EX-9' };
		const built = partElement(part, 587.6);
		if (!built.ok) throw new Error(built.reason);
		const e = built.element;
		const img = imageAfter(layoutMatrix(create(), { objectDistanceMm: 300, elements: [e], gapsMm: [], backDistanceMm: 0 }))!;
		const sys = traceSystemFromLayout({ objectDistanceMm: 300, elements: [e], gapsMm: [], backDistanceMm: img.imageDistanceMm }, [part.diameterMm]);
		if (!sys.ok) throw sys.error;
		const cone = axialCone(sys.value, 0.03);
		const sinChief = stopChiefSine(sys.value, h, cone.stopSurface);
		return { sys: sys.value, cone, sinChief };
	}

	it('pupilSpot: unless it stops, the figures are the same bit for bit; when it stops, its RMS lies between the limit asked and the full spot', () => {
		const { sys, sinChief } = single(8);
		const pupil = edgePupil(sys, 8, sinChief, 0.03);
		if (pupil === null || pupil === 'blocked') throw new Error('the edge should pass');
		const opts = { rings: EDGE_RINGS, spokes: EDGE_SPOKES };
		const full = pupilSpot(sys, 8, pupil, opts);
		expect(full.complete).toBe(true);
		expect(pupilSpot(sys, 8, pupil, { ...opts, stopAboveMm: 10 * full.rmsAboutCentroidMm })).toEqual(full);
		for (const f of [0.2, 0.5, 0.8, 0.95]) {
			const cut = pupilSpot(sys, 8, pupil, { ...opts, stopAboveMm: f * full.rmsAboutCentroidMm });
			expect(cut.complete).toBe(false);
			expect(cut.rmsAboutCentroidMm).toBeGreaterThan(f * full.rmsAboutCentroidMm);
			expect(cut.rmsAboutCentroidMm).toBeLessThanOrEqual(full.rmsAboutCentroidMm);
			expect(cut.raysTraced).toBeLessThan(full.raysTraced);
		}
	});

	it('a blocked field edge: edgeTrace gives what the grid over its cone gives, without tracing that grid again', () => {
		// Two windows (10 mm, then 4 mm clear 100 mm further on): the 4 mm one is the stop, and the chief
		// ray of a point 20 mm off axis meets the first window at 20·(1 − 100/206) ≈ 10.3 mm, beyond its rim.
		const win = element([{ radiusMm: null, thicknessMm: 5, material: '517642' }, { radiusMm: null }], 587.6, 10);
		const small = element([{ radiusMm: null, thicknessMm: 1, material: '517642' }, { radiusMm: null }], 587.6, 4);
		const two = traceSystemFromLayout({ objectDistanceMm: 100, elements: [win, small], gapsMm: [100], backDistanceMm: 50 });
		if (!two.ok) throw two.error;
		const cone = axialCone(two.value, 0.01);
		const sinChief = stopChiefSine(two.value, 20, cone.stopSurface);
		expect(edgePupil(two.value, 20, sinChief, 0.01)).toBe('blocked');
		const grid = fieldGridSpot(two.value, 20, { sinChief, radiusSine: 0.01, grid: EDGE_GRID });
		expect(grid.raysTraced).toBe(0);
		const edge = edgeTrace(two.value, 20, 0.01, cone.stopSurface);
		expect(edge).toEqual({ rmsMm: null, centroidMm: NaN, lostFraction: 1 - grid.passedFraction, sinChief, pupil: null, complete: true });
		expect(edge.lostFraction).toBe(1);
		// Nearer the axis the same windows pass part of the cone: no longer blocked.
		expect(edgePupil(two.value, 2, stopChiefSine(two.value, 2, cone.stopSurface), 0.01)).not.toBe('blocked');
	});
});
