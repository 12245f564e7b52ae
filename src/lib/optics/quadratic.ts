/**
 * Internal to the kernels (not re-exported from index.ts): the cancellation-free real quadratic
 * solver with its module-level scratch. Its tolerances come from tolerances.ts (re-exported here for the kernels).
 */
import { DOUBLE_TOL } from './tolerances';

export { VERIFY_TOL, DOUBLE_TOL, AFOCAL_TOL } from './tolerances';

/** solveQuadratic: no real root. */
export const QUAD_NONE = 0;
/** solveQuadratic: linear equation, one root. */
export const QUAD_ONE = 1;
/** solveQuadratic: two distinct roots, ascending. */
export const QUAD_TWO = 2;
/** solveQuadratic: one double root. */
export const QUAD_DOUBLE = 3;
/** solveQuadratic: every x solves it (all coefficients zero within rounding). */
export const QUAD_ALL = 4;

/** Scratch for the roots of `solveQuadratic` (module-level: the kernels allocate nothing). */
export const quadRoots = new Float64Array(2);

/**
 * Real roots of α·x² + β·x + γ = 0 into `quadRoots`, by the cancellation-free form
 * q = −(β + sign(β)·√Δ)/2, x = q/α and γ/q. `scaleB` and `scaleC` are the magnitudes of
 * the terms β and γ were summed from: they set the rounding noise, so a discriminant
 * within that noise of zero is a double root and a β, γ within it of zero are zero.
 */
export function solveQuadratic(alpha: number, beta: number, gamma: number, scaleB: number, scaleC: number): number {
	const noiseB = DOUBLE_TOL * scaleB;
	const noiseC = DOUBLE_TOL * scaleC;
	if (alpha === 0) {
		if (Math.abs(beta) <= noiseB) return Math.abs(gamma) <= noiseC ? QUAD_ALL : QUAD_NONE;
		quadRoots[0] = -gamma / beta;
		return QUAD_ONE;
	}
	const disc = beta * beta - 4 * alpha * gamma;
	const noise = DOUBLE_TOL * (scaleB * scaleB + 4 * Math.abs(alpha) * scaleC);
	if (disc < -noise) return QUAD_NONE;
	if (disc <= noise) {
		quadRoots[0] = -beta / (2 * alpha);
		return QUAD_DOUBLE;
	}
	const q = -0.5 * (beta + (beta >= 0 ? Math.sqrt(disc) : -Math.sqrt(disc)));
	const r0 = q / alpha;
	const r1 = gamma / q;
	if (r0 <= r1) {
		quadRoots[0] = r0;
		quadRoots[1] = r1;
	} else {
		quadRoots[0] = r1;
		quadRoots[1] = r0;
	}
	return QUAD_TWO;
}
