import { describe, expect, it } from 'vitest';
import {
	traceSystemFromLayout,
	traceRay,
	traceRayPair,
	startRay,
	heightAtPlane,
	axialCrossingMm,
	axialSpot,
	axialCone,
	CONE_STEPS,
	CONE_TOP,
	STOP_STEPS,
	tangentialSpot,
	apertureReport,
	traceFan,
	airyRadiusMm,
	workingFNumber,
	imageSideNA,
	layoutMatrix,
	imageAfter,
	create,
	refractiveIndex,
	blackBoxElement,
	RAY_STRIDE,
	TRACE_OK,
	TRACE_MISSED,
	TRACE_TIR,
	TRACE_CLIPPED,
	TRACE_BEHIND,
	type Layout,
	type TraceSystem,
	type ThickElement
} from '../../../src/lib/optics';
import { element, singlet } from './helpers';

const LAMBDA = 587.5618;

function sys(layout: Layout): TraceSystem {
	const r = traceSystemFromLayout(layout);
	if (!r.ok) throw r.error;
	return r.value;
}

/** A layout with the image plane at the paraxial image of the object plane. */
function imagingLayout(elements: ThickElement[], objectDistanceMm: number, gapsMm: number[] = []): Layout {
	const base: Layout = { objectDistanceMm, elements, gapsMm, backDistanceMm: 0 };
	const img = imageAfter(layoutMatrix(create(), base))!;
	return { ...base, backDistanceMm: img.imageDistanceMm };
}

describe("exact trace: Snell's law", () => {
	it('at a flat surface the direction sine is divided by n (Snell; Hecht, Optics, 5th ed. §4.4)', () => {
		const e = element([{ radiusMm: null, thicknessMm: 10, material: '517642' }, { radiusMm: null }]);
		const s = sys({ objectDistanceMm: 20, elements: [e], gapsMm: [], backDistanceMm: 30 });
		const n = refractiveIndex('517642', LAMBDA);
		const ray = new Float64Array(RAY_STRIDE);
		startRay(ray, 0, 0.4);
		const h = new Float64Array(2);
		expect(traceRay(s, ray, h)).toBe(TRACE_OK);
		// Inside the slab the sine is 0.4/n, so the ray rises 10·tan(asin(0.4/n)) in the glass.
		const inside = Math.asin(0.4 / n);
		expect(h[1] - h[0]).toBeCloseTo(10 * Math.tan(inside), 12);
		expect(ray[3]).toBeCloseTo(0.4, 14); // leaves parallel to how it came
	});

	it('a ray aimed at the centre of curvature meets the sphere normally and is not deviated', () => {
		const e = element(singlet(40, -60, 6));
		const s = sys({ objectDistanceMm: 100, elements: [e], gapsMm: [], backDistanceMm: 50 });
		// centre of surface 1 at z = 140; the ray from (0, 7) towards (140, 0)
		const dir = Math.atan2(-7, 140);
		const ray = new Float64Array(RAY_STRIDE);
		startRay(ray, 7, Math.sin(dir));
		const sys1: TraceSystem = { ...s, count: 1 };
		traceRay(sys1, ray);
		expect(ray[3]).toBeCloseTo(Math.sin(dir), 14);
	});

	it('total internal reflection is reported with the surface, not dropped', () => {
		// flat entrance, exit sphere R = −10 centred on the entrance vertex: a ray at 9 mm meets it at 64° > critical angle
		const e = element([{ radiusMm: null, thicknessMm: 10, material: '517642' }, { radiusMm: -10 }]);
		const s = sys({ objectDistanceMm: 5, elements: [e], gapsMm: [], backDistanceMm: 30 });
		const ray = new Float64Array([0, 9, 1, 0, 0, 0]);
		expect(traceRay(s, ray)).toBe(TRACE_TIR);
		expect(ray[5]).toBe(1);
		const ok = new Float64Array([0, 5, 1, 0, 0, 0]);
		expect(traceRay(s, ok)).toBe(TRACE_OK);
	});

	it('a ray that passes beside a sphere is reported as missed', () => {
		const e = element(singlet(8, -8, 6));
		const s = sys({ objectDistanceMm: 5, elements: [e], gapsMm: [], backDistanceMm: 30 });
		const ray = new Float64Array([0, 12, 1, 0, 0, 0]);
		expect(traceRay(s, ray)).toBe(TRACE_MISSED);
		expect(ray[5]).toBe(0);
	});

	it('black boxes cannot be traced: typed no-prescription failure', () => {
		const box = blackBoxElement({ eflMm: 50, bflMm: 47, centerThicknessMm: 4 }, LAMBDA);
		if (!box.ok) throw box.error;
		const r = traceSystemFromLayout({ objectDistanceMm: 10, elements: [box.value], gapsMm: [], backDistanceMm: 10 });
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('no-prescription');
	});
});

describe('two rays traced together (traceRayPair)', () => {
	// The search's rank bound traces the rim ray and the fan's outermost ray together: each must
	// come out exactly as traceRay leaves it (the bound's exactness rests on the same rays).
	const same = (a: Float64Array, b: Float64Array) => expect(Array.from(a).map((v) => Object.is(v, 0) ? 0 : v)).toEqual(Array.from(b).map((v) => Object.is(v, 0) ? 0 : v));
	const systems: TraceSystem[] = [
		// a biconvex lens then a plano-convex one with small clear apertures: rays clip at either
		sys({ objectDistanceMm: 60, elements: [element(singlet(50, -50, 5), LAMBDA, 12), element(singlet(40, null, 4, '785257'), LAMBDA, 9)], gapsMm: [8], backDistanceMm: 40 }),
		// a strongly curved lens: steep rays miss its spheres or meet total internal reflection
		sys({ objectDistanceMm: 4, elements: [element(singlet(6, -6, 5))], gapsMm: [], backDistanceMm: 20 }),
		// flat entrance, exit sphere R = −10 centred on it: rays high up meet total internal reflection
		sys({ objectDistanceMm: 5, elements: [element([{ radiusMm: null, thicknessMm: 10, material: '517642' }, { radiusMm: -10 }])], gapsMm: [], backDistanceMm: 30 })
	];
	const heights = [[0.3, -0.2], [0.3, -0.2], [9, -8.5]];
	it('leaves each ray exactly as traceRay does, whichever of them passes, clips, misses, reflects or meets a surface behind it', () => {
		const statuses = new Set<number>();
		for (const [n, s] of systems.entries()) {
			for (let a = -0.95; a <= 0.95; a += 0.05) {
				for (let b = -0.95; b <= 0.95; b += 0.1) {
					const one = new Float64Array(RAY_STRIDE),
						two = new Float64Array(RAY_STRIDE),
						pa = new Float64Array(RAY_STRIDE),
						pb = new Float64Array(RAY_STRIDE);
					startRay(one, heights[n][0], a);
					startRay(two, heights[n][1], b);
					pa.set(one);
					pb.set(two);
					traceRay(s, one);
					traceRay(s, two);
					traceRayPair(s, pa, pb);
					same(pa, one);
					same(pb, two);
					statuses.add(one[4]).add(two[4]);
				}
			}
		}
		// Every way a ray can end was met (else the test would not show the pair handles it).
		expect([...statuses].sort()).toEqual([TRACE_OK, TRACE_MISSED, TRACE_TIR, TRACE_CLIPPED, TRACE_BEHIND].sort());
	});

	it('axialCone and axialSpot, which trace two rays at a time, give the figures of one ray at a time', () => {
		// The plain algorithms, one traceRay per sine: the bisection of the passed cone (and of the stop above a passing rim) and the fan's sum.
		const passes = (s: TraceSystem, u: number, r: Float64Array) => startRay(r, 0, u) && traceRay(s, r) === TRACE_OK;
		const bisect = (s: TraceSystem, lo: number, hi: number, steps: number, stop: number) => {
			const r = new Float64Array(RAY_STRIDE);
			for (let i = 0; i < steps; i++) {
				const mid = 0.5 * (lo + hi);
				if (passes(s, mid, r)) lo = mid;
				else [hi, stop] = [mid, r[5]];
			}
			return { lo, stop };
		};
		const fan = (s: TraceSystem, na: number, K: number) => {
			const r = new Float64Array(RAY_STRIDE);
			let sum = 0,
				n = 0;
			for (let k = 1; k <= K; k++) {
				if (!passes(s, Math.sqrt((k - 0.5) / K) * na, r)) continue;
				sum += heightAtPlane(r, s.imageZMm)! ** 2;
				n++;
			}
			return n === 0 ? null : Math.sqrt(sum / n);
		};
		let cut = 0;
		for (const s of systems.slice(0, 2)) {
			for (const na of [0.02, 0.08, 0.15, 0.3, 0.6]) {
				const cone = axialCone(s, na);
				const r = new Float64Array(RAY_STRIDE);
				const rim = Math.min(na, CONE_TOP);
				if (passes(s, rim, r)) {
					const above = passes(s, CONE_TOP, r) ? -1 : bisect(s, rim, CONE_TOP, STOP_STEPS, r[5]).stop;
					expect(cone).toEqual({ requestedSine: na, passedSine: na, stopSurface: rim === CONE_TOP ? -1 : above, lostFraction: 0 });
				} else {
					cut++;
					const b = bisect(s, 0, rim, CONE_STEPS, r[5]);
					expect(cone.passedSine).toBe(Math.min(na, b.lo));
					expect(cone.stopSurface).toBe(b.stop);
				}
				for (const K of [31, 32]) expect(axialSpot(s, { na, rays: K })?.rmsAboutCentroidMm ?? null).toBe(fan(s, na, K));
			}
		}
		expect(cut).toBeGreaterThan(2); // cones cut by the apertures were among them
	});
});

describe('real rays converge to the paraxial image as NA → 0', () => {
	const cases: [string, () => Layout][] = [
		['biconvex singlet', () => imagingLayout([element(singlet(51.5, -51.5, 4.2))], 140)],
		['meniscus at 1064 nm', () => imagingLayout([element(singlet(25, 60, 3.6, 'fused-silica'), 1064)], 260)],
		[
			'pair',
			() => imagingLayout([element(singlet(51.5, -51.5, 4.2)), element(singlet(null, -38.6, 5.1, 'caf2'))], 200, [15])
		]
	];
	it.each(cases)('%s: axial crossing → paraxial image, error falling as NA² (third order)', (_n, make) => {
		const layout = make();
		const s = sys(layout);
		const errs = [0.02, 0.01, 0.005, 0.0002].map((na) => Math.abs(axialCrossingMm(s, na)! - s.imageZMm));
		expect(errs[3]).toBeLessThan(1e-3);
		expect(errs[3] / errs[0]).toBeLessThan(1.2e-4); // (0.0002 / 0.02)² = 1e-4
		expect(errs[0] / errs[1]).toBeGreaterThan(3.6);
		expect(errs[0] / errs[1]).toBeLessThan(4.4);
		expect(errs[1] / errs[2]).toBeGreaterThan(3.8);
		// and the off-axis chief ray lands at m·y for a small field
		const m = layoutMatrix(create(), layout)[0];
		const ray = new Float64Array(RAY_STRIDE);
		startRay(ray, 0.01, -0.01 / s.zMm[0]);
		traceRay(s, ray);
		expect(heightAtPlane(ray, s.imageZMm)! / 0.01).toBeCloseTo(m, 5);
	});
});

describe('RMS spot sampling', () => {
	const lens = () => element(singlet(51.5, -51.5, 4.2));

	it('on axis, defocus only (y ∝ ρ): the area-weighted RMS is y_marginal/√2 (∫ρ²·2ρ dρ = 1/2)', () => {
		const layout = imagingLayout([lens()], 160);
		const defocused = { ...layout, backDistanceMm: layout.backDistanceMm + 2 };
		const s = sys(defocused);
		const na = 0.002; // spherical aberration negligible against 2 mm of defocus
		const spot = axialSpot(s, { na, rays: 64 })!;
		const ray = new Float64Array(RAY_STRIDE);
		startRay(ray, 0, na);
		traceRay(s, ray);
		const marginal = Math.abs(heightAtPlane(ray, s.imageZMm)!);
		expect(spot.kind).toBe('axial-area-weighted');
		expect(spot.rmsAboutChiefMm / marginal).toBeCloseTo(Math.SQRT1_2, 2);
		expect(spot.rmsAboutCentroidMm).toBe(spot.rmsAboutChiefMm);
	});

	it('on axis, third-order spherical only (y ∝ ρ³): the RMS is y_marginal/2 (∫ρ⁶·2ρ dρ = 1/4), not the 1-D fan value 1/√7', () => {
		const layout = imagingLayout([lens()], 160);
		const s = sys(layout);
		const na = 0.03;
		const spot = axialSpot(s, { na, rays: 64 })!;
		const ray = new Float64Array(RAY_STRIDE);
		startRay(ray, 0, na);
		traceRay(s, ray);
		const marginal = Math.abs(heightAtPlane(ray, s.imageZMm)!);
		expect(spot.rmsAboutChiefMm / marginal).toBeCloseTo(0.5, 2);
		expect(spot.raysFailed).toBe(0);
	});

	it('the tangential fan is labelled, uniform across the fan (defocus: y_rim/√3), and about its centroid never worse than about the chief', () => {
		const layout = imagingLayout([lens()], 160);
		const s = sys({ ...layout, backDistanceMm: layout.backDistanceMm + 2 });
		const t0 = tangentialSpot(s, 0, { na: 0.002, rays: 64 })!;
		const ray = new Float64Array(RAY_STRIDE);
		startRay(ray, 0, 0.002);
		traceRay(s, ray);
		expect(t0.kind).toBe('tangential');
		expect(t0.rmsAboutChiefMm / Math.abs(heightAtPlane(ray, s.imageZMm)!)).toBeCloseTo(1 / Math.sqrt(3), 2);
		const t = tangentialSpot(sys(layout), 8, { na: 0.05, rays: 32 })!;
		expect(t.rmsAboutCentroidMm).toBeLessThanOrEqual(t.rmsAboutChiefMm);
		expect(Math.abs(t.centroidMm - t.chiefMm)).toBeGreaterThan(1e-4); // coma shifts the centroid
	});

	it('vignetting: rays beyond a clear aperture are flagged per surface', () => {
		const wide = element(singlet(51.5, -51.5, 4.2), LAMBDA, 25);
		const narrow = element(singlet(51.5, -51.5, 4.2), LAMBDA, 6);
		const open = apertureReport(sys(imagingLayout([wide], 160)), 5, { na: 0.05 });
		expect(open.vignetted).toBe(false);
		const tight = apertureReport(sys(imagingLayout([narrow], 160)), 5, { na: 0.05 });
		expect(tight.vignetted).toBe(true);
		// marginal ray at the first surface: ≈ 160·tan(asin 0.05) ≈ 8 mm > 3 mm
		expect(tight.surfaces[0].marginalMm!).toBeGreaterThan(7.5);
		expect(tight.surfaces[0].semiApertureMm).toBe(3);
	});
});

describe('plano-convex orientation (common practice, no source): curved side toward the collimated beam', () => {
	it('has less spherical aberration than the flat side toward the beam, by real rays', () => {
		const spec = singlet(38.6, null, 5.1);
		const forward = element(spec),
			backward = element(spec, LAMBDA, null, true);
		const far = 1e6; // object 1 km away: a collimated beam
		const na = 10 / far; // 10 mm beam radius
		const figures = [forward, backward].map((e) => {
			const s = sys(imagingLayout([e], far));
			const lsa = Math.abs(axialCrossingMm(s, na)! - s.imageZMm);
			let best = Infinity;
			for (let dz = -3; dz <= 0.5; dz += 0.01) best = Math.min(best, axialSpot(s, { na, imageZMm: s.imageZMm + dz })!.rmsAboutChiefMm);
			return { lsa, best };
		});
		expect(figures[0].lsa).toBeLessThan(figures[1].lsa / 3);
		expect(figures[0].best).toBeLessThan(figures[1].best / 3);
	});
});

describe('Airy radius', () => {
	it('is 1.22·λ·N, the first zero of J1 over π (Born & Wolf, Principles of Optics, 7th ed. §8.5.2)', () => {
		// Independent: J1(x) = (1/π)∫₀^π cos(τ − x sin τ) dτ (Bessel's integral), its first zero by bisection.
		const j1 = (x: number) => {
			let s = 0;
			const n = 2000;
			for (let i = 0; i < n; i++) {
				const t = (Math.PI * (i + 0.5)) / n;
				s += Math.cos(t - x * Math.sin(t));
			}
			return s / n;
		};
		let lo = 3,
			hi = 4.5;
		for (let i = 0; i < 60; i++) {
			const mid = (lo + hi) / 2;
			if (Math.sign(j1(mid)) === Math.sign(j1(lo))) lo = mid;
			else hi = mid;
		}
		const factor = lo / Math.PI; // 1.2197
		const r = airyRadiusMm(632.8, 8);
		expect(r / (632.8e-6 * 8)).toBeCloseTo(factor, 3);
		expect(r).toBeCloseTo(1.22 * 632.8e-6 * 8, 15);
	});

	it('working f-number from the image-side NA: N = 1/(2 NA), NA′ = NA/|m|', () => {
		expect(workingFNumber(imageSideNA(0.1, -2))).toBeCloseTo(10, 14);
	});
});

describe('fans for drawing', () => {
	it('traceFan gives polylines from the object point through every surface to the image plane, on the sphere at each hit', () => {
		const e = element(singlet(51.5, -51.5, 4.2), LAMBDA, 20);
		const layout = imagingLayout([e], 160);
		const s = sys(layout);
		const fan = traceFan(s, 5, { na: 0.05, count: 5 });
		expect(fan).toHaveLength(5);
		expect(fan[2].rho).toBe(0);
		for (const ray of fan) {
			expect(ray.status).toBe(TRACE_OK);
			expect(ray.points).toHaveLength(4); // object, two surfaces, image plane
			expect(ray.points[0]).toEqual({ zMm: 0, yMm: 5 });
			// the surface points lie on their spheres: (z − zc)² + y² = R²
			const p1 = ray.points[1];
			expect((p1.zMm - (s.zMm[0] + 51.5)) ** 2 + p1.yMm ** 2).toBeCloseTo(51.5 ** 2, 8);
			expect(ray.points[3].zMm).toBeCloseTo(s.imageZMm, 12);
		}
		// Inverted image of an object point above the axis: the chief ray lands below it.
		expect(fan[2].points[3].yMm).toBeLessThan(0);
	});

	it('a fan ray stopped by total internal reflection ends at the surface where it stopped', () => {
		const e = element([{ radiusMm: null, thicknessMm: 10, material: '517642' }, { radiusMm: -10 }]);
		const s = sys({ objectDistanceMm: 5, elements: [e], gapsMm: [], backDistanceMm: 30 });
		const fan = traceFan(s, 9, { na: 0.001, count: 3, pupilZMm: 1e9 });
		expect(fan.every((r) => r.status === TRACE_TIR)).toBe(true);
		expect(fan[0].points).toHaveLength(3); // object, entrance, the TIR surface
	});
});
