/**
 * The bounding pass's first-surface cut (`firstSurfaceCuts`, rank-bound.ts): beyond the distance
 * it gives, the element placed first loses more of the axial cone than the vignetting tolerance,
 * as `axialCone` (the evaluation) finds it. Checked three ways: against the geometry of a flat
 * face (a ray at sine u from the axis meets a plane s away at height s·tan(asin u): common
 * practice, no source), against axialCone on both sides of the cut for random invented singlets
 * in either orientation, and the exact top-N over stocks with the cut at work is in exact-top-n.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { axialCone, traceSystemFromLayout } from '../../../src/lib/optics';
import { firstSurfaceCuts, rayTable } from '../../../src/lib/solver/search/rank-bound';
import { VIGNETTING_TOLERANCE } from '../../../src/lib/solver/ranking';
import { element, randomSinglet, rng, singlet } from '../optics/helpers';

const u0 = (na: number) => na * Math.sqrt(1 - 1.0001 * VIGNETTING_TOLERANCE);

describe('firstSurfaceCuts', () => {
	it('a flat first face of 20 mm clear aperture cuts at 10 / tan(asin u0), 1e-6 beyond', () => {
		const e = element(singlet(null, -51.7, 5), 587.6, 20);
		const out = new Float64Array(1);
		firstSurfaceCuts(rayTable([e], [25.4]), Int32Array.of(0), 0.05, out);
		const expected = 10 / Math.tan(Math.asin(u0(0.05)));
		expect(out[0] / expected - 1).toBeGreaterThan(0.5e-6);
		expect(out[0] / expected - 1).toBeLessThan(2e-6);
	});

	it('beyond the cut axialCone loses more than the tolerance, for random singlets either way round; black boxes get none', () => {
		const r = rng(31);
		let checked = 0;
		for (let k = 0; k < 40; k++) {
			const { surfaces, clearApertureMm } = randomSinglet(r);
			const e = element(surfaces, 587.6, clearApertureMm, r() < 0.5);
			const na = [0.02, 0.05, 0.1, 0.2][k % 4];
			const out = new Float64Array(2);
			const table = rayTable([e, { ...e, surfaces: null }], [null, null]);
			firstSurfaceCuts(table, Int32Array.of(0, 1), na, out);
			expect(out[1]).toBe(Infinity);
			if (!Number.isFinite(out[0])) continue;
			for (const f of [1, 1.01, 1.5, 4]) {
				const sys = traceSystemFromLayout({ objectDistanceMm: out[0] * f, elements: [e], gapsMm: [], backDistanceMm: 100 });
				if (!sys.ok) throw sys.error;
				expect(axialCone(sys.value, na).lostFraction).toBeGreaterThan(VIGNETTING_TOLERANCE);
			}
			checked++;
		}
		expect(checked).toBeGreaterThan(30);
	});
});
