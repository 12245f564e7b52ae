import { describe, expect, it } from 'vitest';
import {
	shapeFactor,
	positionFactor,
	thinLensSpherical,
	bestShapeFactor,
	traceSystemFromLayout,
	traceRay,
	startRay,
	axialCrossingMm,
	layoutMatrix,
	imageAfter,
	cardinalPoints,
	refractiveIndex,
	create,
	RAY_STRIDE,
	type Layout
} from '../../../src/lib/optics';
import { element, singlet } from './helpers';

const LAMBDA = 587.5618;

describe('shape and position factors', () => {
	it('plano-convex curved side first q = +1, curved side last q = −1, equiconvex 0', () => {
		expect(shapeFactor(50, null)).toBe(1);
		expect(shapeFactor(null, -50)).toBe(-1);
		expect(shapeFactor(50, -50)).toBe(0);
		expect(shapeFactor(40, 40)).toBeNull();
	});
	it('collimated input p = −1, 1:1 imaging p = 0', () => {
		expect(positionFactor(0)).toBe(-1);
		expect(positionFactor(-1)).toBeCloseTo(0, 15);
		expect(positionFactor(1)).toBeNull();
	});
	it('best shape for collimated light ≈ +0.71 at n = 1.5 (Jenkins & White, Fundamentals of Optics, 4th ed. 1976, ch. 9, from memory)', () => {
		expect(bestShapeFactor(1.5, -1)).toBeCloseTo(0.714, 3);
	});
	it('the reversed plano-convex has about four times the third-order spherical aberration at n = 1.5 (27/7; common practice)', () => {
		const sa = (q: number) =>
			thinLensSpherical({ index: 1.5, shapeFactor: q, positionFactor: -1, eflMm: 100, imageDistanceMm: 100, rayHeightMm: 5 }).longitudinalMm;
		expect(sa(-1) / sa(1)).toBeCloseTo(27 / 7, 10);
	});
});

describe('third-order estimate against real rays (thin-lens limit)', () => {
	// A nearly thin lens (centre thickness 0.01 mm) and a small aperture: the real-ray
	// longitudinal aberration must approach the third-order value as h → 0.
	const shapes: [number | null, number | null][] = [
		[80, null],
		[null, -80],
		[120, -120],
		[60, -240],
		[40, 120]
	];
	const conjugates = [1e6, 3, 2]; // object distance: far, 3f, 2f (in units of f for the last two)

	it.each(shapes)('R1 = %s, R2 = %s', (r1, r2) => {
		// Centre thickness 0.01 mm plus what keeps the surfaces from crossing below 1.3 mm (the
		// trace stops a ray that meets a surface behind the previous one, as in a real lens).
		const sag = (r: number | null, y: number) => (r === null ? 0 : r - Math.sign(r) * Math.sqrt(r * r - y * y));
		const e = element(singlet(r1, r2, 0.01 + Math.max(0, sag(r1, 1.3) - sag(r2, 1.3))));
		const f = cardinalPoints(e.matrix)!.eflMm;
		const n = refractiveIndex('517642', LAMBDA);
		for (const c of conjugates) {
			const s0 = c > 100 ? c : c * f;
			const base: Layout = { objectDistanceMm: s0, elements: [e], gapsMm: [], backDistanceMm: 0 };
			const img = imageAfter(layoutMatrix(create(), base))!;
			const layout = { ...base, backDistanceMm: img.imageDistanceMm };
			const sysR = traceSystemFromLayout(layout);
			if (!sysR.ok) throw sysR.error;
			const sys = sysR.value;
			const ratios: number[] = [];
			for (const hTarget of [1.2, 0.6]) {
				const sinA = hTarget / Math.hypot(s0, hTarget);
				const ray = new Float64Array(RAY_STRIDE);
				const heights = new Float64Array(2);
				startRay(ray, 0, sinA);
				traceRay(sys, ray, heights);
				const real = sys.imageZMm - axialCrossingMm(sys, sinA)!;
				const third = thinLensSpherical({
					index: n,
					shapeFactor: shapeFactor(r1, r2)!,
					positionFactor: positionFactor(img.magnification)!,
					eflMm: f,
					imageDistanceMm: img.imageDistanceMm,
					rayHeightMm: heights[0]
				}).longitudinalMm;
				ratios.push(real / third);
			}
			// Agreement to ~1e-4 (the residual is the 0.01 mm thickness and fifth order);
			// a wrong coefficient in the bracket would be off by tens of per cent.
			for (const r of ratios) expect(Math.abs(r - 1)).toBeLessThan(2e-3);
		}
	});
});
