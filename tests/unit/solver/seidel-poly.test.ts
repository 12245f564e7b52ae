/**
 * The Seidel quartic of the solver's screen against exact real rays: the transverse
 * spherical aberration at the paraxial image, δy' = −S_I / (2 n' u') (Welford, Aberrations
 * of Optical Systems, 1986, §7.3; from memory) in Welford's angle convention, which is
 * δy' = +S_I / (2u') with our slopes u = dy/dz in air, must match a real ray's miss for small
 * apertures, where third order dominates (error shrinking like NA², checked at two NAs).
 */
import { describe, expect, it } from 'vitest';
import { buildElement, placeSingle, placementLayout, traceSystemFromLayout, startRay, traceRay, heightAtPlane, RAY_STRIDE, TRACE_OK } from '../../../src/lib/optics';
import { seidelPolynomial, evalSeidel, SEIDEL_STRIDE } from '../../../src/lib/solver/search/seidel-poly';

function check(surfaces: Parameters<typeof buildElement>[0], trackMm: number) {
	const el = buildElement(surfaces, 587.6, { clearApertureMm: 20 });
	if (!el.ok) throw el.error;
	const placed = placeSingle(el.value, trackMm);
	if (!placed.ok) throw new Error(placed.message);
	const p = placed.placements[0];
	const sys = traceSystemFromLayout(placementLayout([el.value], p));
	if (!sys.ok) throw sys.error;
	const poly = new Float64Array(SEIDEL_STRIDE);
	seidelPolynomial(el.value.surfaces, poly, 0);
	return (na: number) => {
		const u = Math.tan(Math.asin(na));
		const y = p.objectDistanceMm * u;
		const m = el.value.matrix;
		const uOut = m[2] * y + m[3] * u;
		const predicted = evalSeidel(poly, 0, y, u) / (2 * uOut);
		const ray = new Float64Array(RAY_STRIDE);
		startRay(ray, 0, na);
		expect(traceRay(sys.value, ray)).toBe(TRACE_OK);
		const real = heightAtPlane(ray, sys.value.imageZMm)!;
		return { predicted, real };
	};
}

describe('Seidel quartic of an element', () => {
	it.each([
		['plano-convex, curved side first', [{ radiusMm: 51.7, thicknessMm: 4, material: '517642' }, { radiusMm: null }]],
		['plano-convex, flat side first', [{ radiusMm: null, thicknessMm: 4, material: '517642' }, { radiusMm: -51.7 }]],
		['meniscus', [{ radiusMm: 30, thicknessMm: 4, material: '620364' }, { radiusMm: 80 }]]
	])('predicts the real-ray transverse aberration of a %s lens', (_, surfaces) => {
		const at = check(surfaces as Parameters<typeof buildElement>[0], 420);
		const small = at(0.01),
			smaller = at(0.005);
		expect(Math.sign(small.predicted)).toBe(Math.sign(small.real));
		const err1 = Math.abs(small.predicted / small.real - 1),
			err2 = Math.abs(smaller.predicted / smaller.real - 1);
		expect(err1).toBeLessThan(0.05);
		expect(err2).toBeLessThan(err1 * 0.6);
	});
});
