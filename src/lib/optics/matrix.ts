/**
 * 2x2 reduced ray transfer (ABCD) matrices.
 *
 * A matrix is a `Float64Array(4)` holding [A, B, C, D] row-major, acting on the ray
 * vector (y, n·u): y in mm, n·u the reduced angle (refractive index times the paraxial
 * angle in radians). With reduced angles every translation and refraction matrix has
 * determinant 1, whatever the media, and so has every product of them.
 *
 * The style follows gl-matrix: the caller owns memory and passes an `out` matrix that
 * receives the result; `out` may alias an input. Nothing here allocates except `create`.
 */

/** A 2x2 reduced ray transfer matrix [A, B, C, D] (B in mm, C in 1/mm). */
export type Mat2 = Float64Array;

/** Any read-only view of four numbers [A, B, C, D]; inputs are never written. */
export type ReadonlyMat2 = ArrayLike<number>;

/** Index of A (dimensionless) in a `Mat2`. */
export const A = 0;
/** Index of B (mm) in a `Mat2`. */
export const B = 1;
/** Index of C (1/mm, minus the power) in a `Mat2`. */
export const C = 2;
/** Index of D (dimensionless) in a `Mat2`. */
export const D = 3;

/** Default tolerance of `approxEqual`: a few hundred ulps of a double. */
export const EPSILON = 1e-12;

/** Allocates a new matrix, the identity unless entries are given. */
export function create(a = 1, b = 0, c = 0, d = 1): Mat2 {
	const out = new Float64Array(4);
	out[0] = a;
	out[1] = b;
	out[2] = c;
	out[3] = d;
	return out;
}

/** Writes the four entries into `out` and returns it. */
export function set(out: Mat2, a: number, b: number, c: number, d: number): Mat2 {
	out[0] = a;
	out[1] = b;
	out[2] = c;
	out[3] = d;
	return out;
}

/** Writes the identity into `out` (a plane onto itself). */
export function identity(out: Mat2): Mat2 {
	return set(out, 1, 0, 0, 1);
}

/** Copies `m` into `out`. */
export function copy(out: Mat2, m: ReadonlyMat2): Mat2 {
	return set(out, m[0], m[1], m[2], m[3]);
}

/**
 * out = a · b. In a system product the matrix of the element met first stands on the
 * right: the matrix of "b then a" is multiply(out, a, b). `out` may alias `a` or `b`.
 */
export function multiply(out: Mat2, a: ReadonlyMat2, b: ReadonlyMat2): Mat2 {
	const a0 = a[0],
		a1 = a[1],
		a2 = a[2],
		a3 = a[3];
	const b0 = b[0],
		b1 = b[1],
		b2 = b[2],
		b3 = b[3];
	out[0] = a0 * b0 + a1 * b2;
	out[1] = a0 * b1 + a1 * b3;
	out[2] = a2 * b0 + a3 * b2;
	out[3] = a2 * b1 + a3 * b3;
	return out;
}

/**
 * Translation over `distanceMm` through a medium of refractive index `index`:
 * [[1, t/n], [0, 1]] (reduced thickness t/n, because the ray vector carries n·u).
 */
export function translation(out: Mat2, distanceMm: number, index = 1): Mat2 {
	return set(out, 1, distanceMm / index, 0, 1);
}

/**
 * Refraction at a spherical surface of radius `radiusMm` (null = flat) from index
 * `indexBefore` to `indexAfter`: [[1, 0], [−P, 1]] with surface power
 * P = (n' − n) / R in 1/mm. Radius sign: positive when the centre of curvature lies to
 * the right (+z) of the vertex.
 */
export function refraction(out: Mat2, indexBefore: number, indexAfter: number, radiusMm: number | null): Mat2 {
	const power = radiusMm === null ? 0 : (indexAfter - indexBefore) / radiusMm;
	return set(out, 1, 0, -power, 1);
}

/** A thin lens (or any element seen between its principal planes) of power `powerPerMm`. */
export function thinLens(out: Mat2, powerPerMm: number): Mat2 {
	return set(out, 1, 0, -powerPerMm, 1);
}

/**
 * The vertex-to-vertex matrix of an element given by its power and principal planes:
 * translation from the first vertex to H, thin lens, translation from H' to the last
 * vertex. `frontPrincipalMm` is the position of H measured from the first vertex,
 * `backPrincipalMm` the position of H' measured from the last vertex (both + to the
 * right). Used for black-box parts and for rebuilding an element from cardinal data.
 */
export function fromPrincipalPlanes(
	out: Mat2,
	powerPerMm: number,
	frontPrincipalMm: number,
	backPrincipalMm: number
): Mat2 {
	const p = powerPerMm,
		h1 = frontPrincipalMm,
		h2 = backPrincipalMm;
	// T(−h2) · Φ · T(h1), written out.
	return set(out, 1 + h2 * p, h1 - h2 * (1 - p * h1), -p, 1 - p * h1);
}

/** Determinant AD − BC; 1 for every reduced ray transfer matrix (a test invariant). */
export function determinant(m: ReadonlyMat2): number {
	return m[0] * m[3] - m[1] * m[2];
}

/**
 * The matrix of the same optics traversed in the opposite direction (the element turned
 * round, object and image space both of the same index): [[D, B], [C, A]].
 */
export function reverse(out: Mat2, m: ReadonlyMat2): Mat2 {
	return set(out, m[3], m[1], m[2], m[0]);
}

/**
 * The one comparison used by the code and its tests: absolute near zero, relative
 * above, |a − b| ≤ tol · max(1, |a|, |b|).
 */
export function approxEqual(a: number, b: number, tol = EPSILON): boolean {
	return Math.abs(a - b) <= tol * Math.max(1, Math.abs(a), Math.abs(b));
}

/** `approxEqual` entry by entry. */
export function matApproxEqual(a: ReadonlyMat2, b: ReadonlyMat2, tol = EPSILON): boolean {
	return (
		approxEqual(a[0], b[0], tol) &&
		approxEqual(a[1], b[1], tol) &&
		approxEqual(a[2], b[2], tol) &&
		approxEqual(a[3], b[3], tol)
	);
}
