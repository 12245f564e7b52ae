/**
 * Physical filter of kernel roots: can the parts really stand there? Positive working
 * distances and gap above the caller's minimums, and no glass touching glass, or cutting
 * the object or target plane, anywhere out to the glass edge (the outer diameter, using the
 * sags there; the clear aperture when the outer diameter is unknown).
 * Allocation-free, reads the same snapshot as the kernels.
 */
import {
	ELEMENT_STRIDE,
	EL_FRONT_CURVATURE,
	EL_BACK_CURVATURE,
	EL_EDGE_SEMI_DIAMETER,
	EL_EDGE_FRONT_SAG,
	EL_EDGE_BACK_SAG
} from './snapshot';

/** Object distance (object plane to first vertex) below the minimum working distance. */
export const PHYS_OBJECT_DISTANCE = 1;
/** Back distance (last vertex to target plane) below the minimum working distance. */
export const PHYS_BACK_DISTANCE = 2;
/** Vertex gap between the two parts below the minimum gap. */
export const PHYS_GAP = 4;
/** The facing surfaces of the two parts touch or cross somewhere out to the smaller glass edge. */
export const PHYS_SURFACES_TOUCH = 8;
/** The first surface reaches the object plane (e.g. a concave surface's rim). */
export const PHYS_OBJECT_PLANE = 16;
/** The last surface reaches the target plane. */
export const PHYS_TARGET_PLANE = 32;
/** A glass edge lies beyond what the sphere of a facing surface reaches. */
export const PHYS_APERTURE = 64;

if (
	ELEMENT_STRIDE !== 13 ||
	EL_FRONT_CURVATURE !== 5 ||
	EL_BACK_CURVATURE !== 6 ||
	EL_EDGE_SEMI_DIAMETER !== 10 ||
	EL_EDGE_FRONT_SAG !== 11 ||
	EL_EDGE_BACK_SAG !== 12
) {
	throw new Error('optics: snapshot layout changed; update the literal offsets in physical.ts');
}

/**
 * Physical check of a single-element placement (object distance s, back distance d, mm).
 * Returns 0 when it can be built, else a sum of PHYS_* bits.
 * - s and d ≥ minWorkingDistanceMm (measured at the vertices);
 * - the glass edge of the first surface stays to the right of the object plane (s + its
 *   sag at the edge > 0), that of the last surface to the left of the target plane.
 */
export function checkSinglePhysical(
	snapshot: Float64Array,
	i: number,
	s: number,
	d: number,
	minWorkingDistanceMm: number
): number {
	const o = i * ELEMENT_STRIDE;
	let bad = 0;
	if (!(s >= minWorkingDistanceMm)) bad |= PHYS_OBJECT_DISTANCE;
	if (!(d >= minWorkingDistanceMm)) bad |= PHYS_BACK_DISTANCE;
	if (!(s + Math.min(0, snapshot[o + EL_EDGE_FRONT_SAG]) > 0)) bad |= PHYS_OBJECT_PLANE;
	if (!(d - Math.max(0, snapshot[o + EL_EDGE_BACK_SAG]) > 0)) bad |= PHYS_TARGET_PLANE;
	return bad;
}

/**
 * Physical check of a pair placement (s, vertex gap g, d, mm; element i then j).
 * Returns 0 when it can be built, else a sum of PHYS_* bits:
 * - s, d ≥ minWorkingDistanceMm and g ≥ minGapMm (at the vertices, as the request states);
 * - the last surface of i and the first of j keep a positive air gap at every height up
 *   to the smaller of the two glass edges (outer semi-diameters), where the glass of the
 *   smaller part ends (exact: as `minAirGapMm` shows, the gap is monotone in height, so
 *   vertex and edge decide). The surfaces are taken as spheres out to the edge (bevels and
 *   mounts are not modelled; a bevel only takes glass away). Parts with neither an outer
 *   diameter nor a clear aperture are checked at the vertices only; black boxes count as flat.
 * - the edges of the outer surfaces stay off the object and target planes.
 */
export function checkPairPhysical(
	snapshot: Float64Array,
	i: number,
	j: number,
	s: number,
	g: number,
	d: number,
	minWorkingDistanceMm: number,
	minGapMm: number
): number {
	// Literal offsets (hot path; asserted against snapshot.ts at load above): stride 13,
	// 5 front curvature, 6 back curvature, 10 edge semi-diameter, 11 edge front sag, 12 edge back sag.
	const o1 = i * 13,
		o2 = j * 13;
	let bad = 0;
	if (!(s >= minWorkingDistanceMm)) bad |= 1; // PHYS_OBJECT_DISTANCE
	if (!(d >= minWorkingDistanceMm)) bad |= 2; // PHYS_BACK_DISTANCE
	if (!(g >= minGapMm)) bad |= 4; // PHYS_GAP
	const frontSag = snapshot[o1 + 11],
		backSag = snapshot[o2 + 12];
	if (!(s + (frontSag < 0 ? frontSag : 0) > 0)) bad |= 16; // PHYS_OBJECT_PLANE
	if (!(d - (backSag > 0 ? backSag : 0) > 0)) bad |= 32; // PHYS_TARGET_PLANE
	const h1 = snapshot[o1 + 10],
		h2 = snapshot[o2 + 10];
	if (h1 === h2) {
		// Same edge: the precomputed edge sags decide.
		const rimGap = g + snapshot[o2 + 11] - snapshot[o1 + 12];
		if (!(g > 0 && rimGap > 0)) bad |= 8; // PHYS_SURFACES_TOUCH
		return bad;
	}
	// Different edges: sags at the smaller one (minAirGapMm written out, as module
	// bindings cost in this loop).
	const h = h1 < h2 ? h1 : h2;
	const cb = snapshot[o1 + 6],
		cf = snapshot[o2 + 5];
	const qb = 1 - cb * cb * h * h,
		qf = 1 - cf * cf * h * h;
	// A hemisphere's rim (h = |R|) may round to a tiny negative q.
	if (qb < -1e-12 || qf < -1e-12) return bad | 64; // PHYS_APERTURE
	const sagBack = (cb * h * h) / (1 + Math.sqrt(qb > 0 ? qb : 0)),
		sagFront = (cf * h * h) / (1 + Math.sqrt(qf > 0 ? qf : 0));
	if (!(g > 0 && g + sagFront - sagBack > 0)) bad |= 8; // PHYS_SURFACES_TOUCH
	return bad;
}
