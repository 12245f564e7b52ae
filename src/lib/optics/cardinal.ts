/**
 * Cardinal points (focal points, principal planes) read off a plane-to-plane matrix.
 *
 * Shared by single elements (vertex-to-vertex matrix) and whole systems (any input plane
 * to any output plane). Object and image space are taken as air (n = 1), so the nodal
 * points coincide with the principal points and EFL = −1/C.
 */
import type { ReadonlyMat2 } from './matrix';

/**
 * |C| at or below this (1/mm, i.e. a focal length beyond 10¹² mm) counts as zero power:
 * the optics is afocal and has no focal points.
 */
export const AFOCAL_POWER_PER_MM = 1e-12;

/**
 * Gaussian data of an optical system in air, all lengths in mm along +z.
 *
 * "first plane" and "last plane" are the input and output planes of the matrix (for an
 * element, its first and last vertex).
 */
export interface CardinalPoints {
	/** Power φ = −C, 1/mm (positive for a converging system). */
	readonly powerPerMm: number;
	/** Effective focal length f = 1/φ, mm, measured from the principal planes. */
	readonly eflMm: number;
	/** Back focal length: last plane to the back focal point F', mm (+ when F' lies after it). */
	readonly bflMm: number;
	/** Front focal length: front focal point F to the first plane, mm (+ when F lies before it). */
	readonly fflMm: number;
	/** Position of the front principal plane H from the first plane, mm (+ to the right). */
	readonly frontPrincipalMm: number;
	/** Position of the back principal plane H' from the last plane, mm (+ to the right). */
	readonly backPrincipalMm: number;
}

/**
 * Cardinal points of the matrix [[A, B], [C, D]] between two planes in air:
 * EFL = −1/C, BFL = −A/C, FFL = −D/C, H at (D − 1)/C from the first plane, H' at
 * (1 − A)/C from the last. Returns null for an afocal matrix (|C| ≤ AFOCAL_POWER_PER_MM),
 * which has no focal points.
 */
export function cardinalPoints(m: ReadonlyMat2): CardinalPoints | null {
	const a = m[0],
		c = m[2],
		d = m[3];
	if (!(Math.abs(c) > AFOCAL_POWER_PER_MM)) return null;
	return {
		powerPerMm: -c,
		eflMm: -1 / c,
		bflMm: -a / c,
		fflMm: -d / c,
		frontPrincipalMm: (d - 1) / c,
		backPrincipalMm: (1 - a) / c
	};
}
