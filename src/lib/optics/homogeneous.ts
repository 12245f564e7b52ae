/**
 * Points and lines of the meridional plane in homogeneous coordinates (w, z, y), and the
 * 3x3 point transfer matrix that maps object points to image points.
 *
 * A point (w, z, y) with w ≠ 0 is the point (z/w, y/w) in mm; w = 0 is a point at
 * infinity (a direction). A line is a triple l with l · p = 0 for its points p. Join of
 * two points and meet of two lines are both the cross product. Object and image space
 * are air.
 */
import type { ReadonlyMat2 } from './matrix';

/** A homogeneous point or line (w, z, y) of the meridional plane. */
export type Vec3 = Float64Array;

/** A 3x3 matrix, row-major, acting on column vectors (w, z, y). */
export type Mat3 = Float64Array;

/** Read-only views of the above; inputs are never written. */
export type ReadonlyVec3 = ArrayLike<number>;
/** Read-only view of a 3x3 matrix. */
export type ReadonlyMat3 = ArrayLike<number>;

/** Allocates the homogeneous point (1, zMm, yMm). */
export function point(zMm: number, yMm: number): Vec3 {
	const p = new Float64Array(3);
	p[0] = 1;
	p[1] = zMm;
	p[2] = yMm;
	return p;
}

/** Allocates a 3x3 matrix (zero). */
export function createMat3(): Mat3 {
	return new Float64Array(9);
}

/**
 * The point transfer matrix of a system whose plane-to-plane matrix `m` runs from the
 * plane z = inputZMm to the plane z = outputZMm (absolute positions, mm). It maps every
 * object point (w, z, y) in object space to its paraxial image point in image space:
 *
 *   w' = (C·z₁ + D)·w − C·z
 *   z' = (z₂·(C·z₁ + D) − A·z₁ − B)·w + (A − z₂·C)·z
 *   y' = y
 *
 * Derivation: an object at distance u = z₁ − z before the input plane images at
 * v = −(A·u + B)/(C·u + D) after the output plane with magnification 1/(C·u + D);
 * multiplying through by w·(C·u + D) gives a linear map. Its determinant is AD − BC = 1.
 * Written into `out`; returns it.
 */
export function pointTransferMatrix(out: Mat3, m: ReadonlyMat2, inputZMm: number, outputZMm: number): Mat3 {
	const a = m[0],
		b = m[1],
		c = m[2],
		d = m[3];
	const z1 = inputZMm,
		z2 = outputZMm;
	const k = c * z1 + d;
	out[0] = k;
	out[1] = -c;
	out[2] = 0;
	out[3] = z2 * k - a * z1 - b;
	out[4] = a - z2 * c;
	out[5] = 0;
	out[6] = 0;
	out[7] = 0;
	out[8] = 1;
	return out;
}

/** out = p · v (apply a 3x3 matrix to a homogeneous point). `out` may alias `v`. */
export function transformPoint(out: Vec3, p: ReadonlyMat3, v: ReadonlyVec3): Vec3 {
	const v0 = v[0],
		v1 = v[1],
		v2 = v[2];
	out[0] = p[0] * v0 + p[1] * v1 + p[2] * v2;
	out[1] = p[3] * v0 + p[4] * v1 + p[5] * v2;
	out[2] = p[6] * v0 + p[7] * v1 + p[8] * v2;
	return out;
}

/** out = u × v; shared by `join` and `meet`. */
function cross(out: Vec3, u: ReadonlyVec3, v: ReadonlyVec3): Vec3 {
	const u0 = u[0],
		u1 = u[1],
		u2 = u[2];
	const v0 = v[0],
		v1 = v[1],
		v2 = v[2];
	out[0] = u1 * v2 - u2 * v1;
	out[1] = u2 * v0 - u0 * v2;
	out[2] = u0 * v1 - u1 * v0;
	return out;
}

/** The line through two points (a ray segment for drawing), into `out`. */
export function join(out: Vec3, p: ReadonlyVec3, q: ReadonlyVec3): Vec3 {
	return cross(out, p, q);
}

/** The point where two lines cross (w = 0 when they are parallel), into `out`. */
export function meet(out: Vec3, l: ReadonlyVec3, k: ReadonlyVec3): Vec3 {
	return cross(out, l, k);
}

/**
 * The line of a ray through (zMm, yMm) with slope dy/dz = `slope` (the paraxial angle
 * in air), into `out`: the join of that point with the point at infinity (0, 1, slope).
 */
export function rayLine(out: Vec3, zMm: number, yMm: number, slope: number): Vec3 {
	// (1, z, y) × (0, 1, s)
	out[0] = zMm * slope - yMm;
	out[1] = -slope;
	out[2] = 1;
	return out;
}

/**
 * The Cartesian point (zMm, yMm) of a homogeneous point, or null when it lies at
 * infinity (|w| ≤ 1e-15 · (|z| + |y|)): for example the image of an object in the front
 * focal plane.
 */
export function toCartesian(v: ReadonlyVec3): { zMm: number; yMm: number } | null {
	const w = v[0];
	if (!(Math.abs(w) > 1e-15 * (Math.abs(v[1]) + Math.abs(v[2])))) return null;
	return { zMm: v[1] / w, yMm: v[2] / w };
}

/** Determinant of a 3x3 matrix (1 for every point transfer matrix; a test invariant). */
export function determinant3(p: ReadonlyMat3): number {
	return (
		p[0] * (p[4] * p[8] - p[5] * p[7]) - p[1] * (p[3] * p[8] - p[5] * p[6]) + p[2] * (p[3] * p[7] - p[4] * p[6])
	);
}
