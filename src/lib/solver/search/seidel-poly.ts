/**
 * Third-order spherical aberration of a thick element as a quartic in its entering paraxial
 * ray, for the solver's cheap screen.
 *
 * For a paraxial ray meeting the element's first vertex at height y with slope u (in air),
 * every surface's Seidel term S_I = −A²·h·Δ(u/n), A = n·i = n·(u + h·c) (Welford,
 * Aberrations of Optical Systems, 1986, §7.3, eq. 7.21; from memory), where h is the ray
 * height at the surface and u, u' the slopes before and after it. h, i and Δ(u/n) are
 * linear in (y, u), so the element's sum is a homogeneous quartic
 *   S_I(y, u) = a₀y⁴ + a₁y³u + a₂y²u² + a₃yu³ + a₄u⁴,
 * found exactly from five evaluations. A system's S_I is the sum over its elements with
 * each element's own entering ray, and the transverse ray aberration at the paraxial image
 * is δy' = −S_I / (2·n'·u') (Welford §7.3, eq. 7.22; from memory) in Welford's angle sign
 * convention; with our slopes u = dy/dz and the image in air it reads δy' = +S_I / (2u').
 * The sign and size are checked against real rays in tests/unit/solver/seidel-poly.test.ts
 * (agreement to a few parts in 10⁴ at NA 0.005–0.01).
 */
import type { ElementSurface } from '../../optics/element';

/** Coefficients per element in a Seidel polynomial array. */
export const SEIDEL_STRIDE = 5;

/** S_I of the surfaces for the entering ray (y, u) at the first vertex (paraxial trace). */
export function surfaceSumSI(surfaces: readonly ElementSurface[], y0: number, u0: number): number {
	let h = y0,
		u = u0,
		sum = 0;
	for (let k = 0; k < surfaces.length; k++) {
		const s = surfaces[k];
		const c = s.radiusMm === null ? 0 : 1 / s.radiusMm;
		const n = s.indexBefore,
			n2 = s.indexAfter;
		const a = n * (u + h * c);
		const u2 = (n * u - h * c * (n2 - n)) / n2;
		sum += -a * a * h * (u2 / n2 - u / n);
		u = u2;
		if (k + 1 < surfaces.length) h += u * (surfaces[k + 1].vertexMm - s.vertexMm);
	}
	return sum;
}

/** The five coefficients a₀..a₄ of an element's S_I quartic into `out[offset…]`. */
export function seidelPolynomial(surfaces: readonly ElementSurface[] | null, out: Float64Array, offset: number): void {
	if (surfaces === null) {
		// A black box has no surfaces: no estimate (the screen treats it as free of aberration).
		out.fill(0, offset, offset + SEIDEL_STRIDE);
		return;
	}
	const a0 = surfaceSumSI(surfaces, 1, 0);
	const a4 = surfaceSumSI(surfaces, 0, 1);
	const p1 = surfaceSumSI(surfaces, 1, 1);
	const m1 = surfaceSumSI(surfaces, 1, -1);
	const p2 = surfaceSumSI(surfaces, 1, 2);
	const a2 = (p1 + m1) / 2 - a0 - a4;
	const odd = (p1 - m1) / 2; // a1 + a3
	const a3 = (p2 - a0 - 4 * a2 - 16 * a4 - 2 * odd) / 6;
	out[offset] = a0;
	out[offset + 1] = odd - a3;
	out[offset + 2] = a2;
	out[offset + 3] = a3;
	out[offset + 4] = a4;
}

/** Evaluates the quartic of element `k` of `poly` at (y, u). */
export function evalSeidel(poly: Float64Array, k: number, y: number, u: number): number {
	const o = k * SEIDEL_STRIDE;
	const y2 = y * y,
		u2 = u * u;
	return poly[o] * y2 * y2 + poly[o + 1] * y2 * y * u + poly[o + 2] * y2 * u2 + poly[o + 3] * y * u2 * u + poly[o + 4] * u2 * u2;
}
