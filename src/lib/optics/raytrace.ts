/**
 * Exact real-ray trace through spherical and flat surfaces (Snell's law in vector form), for
 * the solver's final check and the drawings: meridional rays (`traceRay`) and skew rays in
 * three dimensions (`traceSkewRay`).
 *
 * A meridional ray is (z, y) in mm with unit direction (dirZ, dirY); a skew ray adds x and
 * dirX. The object plane is z = 0, object space is air. Every ray is stopped by the real
 * apertures: at each surface it must land within the surface's clear semi-aperture (never
 * more than the glass edge), it must meet the surface at all, and it must meet it ahead of
 * the point where it left the previous one (a ray never runs backwards). A ray that fails
 * any of these, or meets total internal reflection, stops there with a status and the
 * surface; it is counted as lost, never traced on.
 */
import { type Result, ok, fail, NoPrescriptionError } from './errors';
import type { Layout } from './system';
import { firstVertexPositionsMm, trackLengthMm } from './system';
import { BEHIND_TOL_MM } from './tolerances';

/** A layout's surfaces in absolute position, ready to trace (struct of arrays). */
export interface TraceSystem {
	/** Number of surfaces. */
	readonly count: number;
	/** Vertex z of each surface from the object plane, mm. */
	readonly zMm: Float64Array;
	/** Curvature 1/R of each surface, 1/mm (0 = flat). */
	readonly curvaturePerMm: Float64Array;
	/** Refractive index after each surface (before surface 0 it is 1, air). */
	readonly indexAfter: Float64Array;
	/**
	 * Semi-aperture that stops rays at each surface, mm: half the clear aperture, or half the
	 * outer (glass) diameter when that is smaller or the clear aperture is unknown; Infinity when
	 * neither is known.
	 */
	readonly semiApertureMm: Float64Array;
	/** Which element (index into the layout) each surface belongs to. */
	readonly elementIndex: Int32Array;
	/** z of the target (image) plane, mm. */
	readonly imageZMm: number;
}

/**
 * The surfaces of a layout for tracing. Fails with 'no-prescription' when an element is
 * a black box (it has no surfaces to trace; the solver then ranks it paraxially only).
 * `outerDiametersMm` (one per element, null when unknown) are the glass edges: a clear
 * aperture is never larger than its part.
 */
export function traceSystemFromLayout(layout: Layout, outerDiametersMm: readonly (number | null)[] = []): Result<TraceSystem> {
	const vertices = firstVertexPositionsMm(layout);
	let count = 0;
	for (const e of layout.elements) {
		if (e.surfaces === null) {
			return fail(new NoPrescriptionError('A black-box part has no surfaces; real rays cannot be traced through it.'));
		}
		count += e.surfaces.length;
	}
	const sys = {
		count,
		zMm: new Float64Array(count),
		curvaturePerMm: new Float64Array(count),
		indexAfter: new Float64Array(count),
		semiApertureMm: new Float64Array(count),
		elementIndex: new Int32Array(count),
		imageZMm: trackLengthMm(layout)
	};
	let k = 0;
	layout.elements.forEach((e, ei) => {
		for (const s of e.surfaces ?? []) {
			sys.zMm[k] = vertices[ei] + s.vertexMm;
			sys.curvaturePerMm[k] = s.radiusMm === null ? 0 : 1 / s.radiusMm;
			sys.indexAfter[k] = s.indexAfter;
			const outer = outerDiametersMm[ei] ?? null;
			sys.semiApertureMm[k] = Math.min(e.clearApertureMm === null ? Infinity : e.clearApertureMm / 2, outer === null ? Infinity : outer / 2);
			sys.elementIndex[k] = ei;
			k++;
		}
	});
	return ok(sys);
}

/** Numbers in a ray state buffer: z, y, dirZ, dirY, status, surface. */
export const RAY_STRIDE = 6;
/** Trace status: the ray passed every surface. */
export const TRACE_OK = 0;
/** Trace status: the ray misses the sphere of a surface. */
export const TRACE_MISSED = 1;
/** Trace status: total internal reflection at a surface. */
export const TRACE_TIR = 2;
/** Trace status: the ray lands outside the surface's semi-aperture (clear aperture or glass edge). */
export const TRACE_CLIPPED = 3;
/** Trace status: the ray would meet the surface behind the point where it left the previous one. */
export const TRACE_BEHIND = 4;

/**
 * Traces the ray in `ray` ([z, y, dirZ, dirY] with a unit direction, in air before the
 * first surface) through every surface, in place: on return `ray` holds the ray just
 * after the last surface, ray[4] the status (TRACE_*) and ray[5] the index of the
 * surface where it stopped (−1 when it passed all). `heightsMm`, if given, receives the
 * ray height at each surface met (also at the surface that clipped it). Returns the
 * status. Allocates nothing. `clip` false traces through the apertures (to report how far
 * outside a ray would pass; never for figures).
 *
 * Intersection: the ray is first carried to the vertex tangent plane (height Y there),
 * then the sphere c(Z² + Y²) − 2Z = 0 is met at t = F / (B + √(B² − cF)) further on,
 * F = cY², B = dirZ − c·Y·dirY: the root on the vertex side, exact also for c = 0
 * (the classical two-step transfer; t may be negative when the surface bulges
 * towards the ray). A ray not moving towards +z, or beside the sphere, has missed; one
 * whose total step from its last point is negative meets the surface behind it.
 * Refraction: n'·d' = n·d + (n' cos I' − n cos I)·N with N = (1 − cZ, −cY).
 */
export function traceRay(sys: TraceSystem, ray: Float64Array, heightsMm: Float64Array | null = null, clip = true): number {
	return traceFrom(sys, ray, ray[0], ray[1], ray[2], ray[3], 1, 0, heightsMm, clip);
}

/** `traceRay` of a ray at (z, y) with direction (dz, dy) in index nBefore, from surface k0 on. */
function traceFrom(
	sys: TraceSystem,
	ray: Float64Array,
	z: number,
	y: number,
	dz: number,
	dy: number,
	nBefore: number,
	k0: number,
	heightsMm: Float64Array | null,
	clip: boolean
): number {
	for (let k = k0; k < sys.count; k++) {
		const c = sys.curvaturePerMm[k];
		if (!(dz > 0)) return stop(ray, z, y, dz, dy, TRACE_MISSED, k);
		// First to the vertex tangent plane (so the near-root form below stays valid
		// however far away the ray starts), then on to the sphere.
		const t0 = (sys.zMm[k] - z) / dz;
		z = sys.zMm[k];
		y += t0 * dy;
		const f = c * y * y;
		const b = dz - c * y * dy;
		const disc = b * b - c * f;
		const den = disc >= 0 ? b + Math.sqrt(disc) : -1;
		if (!(den > 0)) return stop(ray, z, y, dz, dy, TRACE_MISSED, k);
		const t = f / den;
		if (t0 + t < -BEHIND_TOL_MM) return stop(ray, z, y, dz, dy, TRACE_BEHIND, k);
		z += t * dz;
		y += t * dy;
		if (heightsMm !== null) heightsMm[k] = y;
		if (clip && Math.abs(y) > sys.semiApertureMm[k]) return stop(ray, z, y, dz, dy, TRACE_CLIPPED, k);
		const nz = 1 - c * (z - sys.zMm[k]),
			ny = -c * y;
		const cosI = dz * nz + dy * ny;
		const nAfter = sys.indexAfter[k];
		const mu = nBefore / nAfter;
		const k2 = 1 - mu * mu * (1 - cosI * cosI);
		if (k2 < 0) return stop(ray, z, y, dz, dy, TRACE_TIR, k);
		const cosIp = cosI >= 0 ? Math.sqrt(k2) : -Math.sqrt(k2);
		const g = cosIp - mu * cosI;
		dz = mu * dz + g * nz;
		dy = mu * dy + g * ny;
		nBefore = nAfter;
	}
	return stop(ray, z, y, dz, dy, TRACE_OK, -1);
}

/**
 * `traceRay` of two rays at once (clipped, no heights): the same arithmetic ray by ray, so the
 * same results bit for bit, with the two dependency chains interleaved (a trace is bound by the
 * latency of its divisions and square roots, so two run in little more than the time of one).
 * Sets each ray's state and status as `traceRay` does; returns nothing.
 */
export function traceRayPair(sys: TraceSystem, a: Float64Array, b: Float64Array): void {
	let za = a[0],
		ya = a[1],
		dza = a[2],
		dya = a[3];
	let zb = b[0],
		yb = b[1],
		dzb = b[2],
		dyb = b[3];
	let nBefore = 1;
	for (let k = 0; k < sys.count; k++) {
		const c = sys.curvaturePerMm[k],
			zk = sys.zMm[k];
		const t0a = (zk - za) / dza,
			t0b = (zk - zb) / dzb;
		const yta = ya + t0a * dya,
			ytb = yb + t0b * dyb;
		const fa = c * yta * yta,
			fb = c * ytb * ytb;
		const ba = dza - c * yta * dya,
			bb = dzb - c * ytb * dyb;
		const da = ba * ba - c * fa,
			db = bb * bb - c * fb;
		const dena = da >= 0 ? ba + Math.sqrt(da) : -1,
			denb = db >= 0 ? bb + Math.sqrt(db) : -1;
		const ta = fa / dena,
			tb = fb / denb;
		const zha = zk + ta * dza,
			yha = yta + ta * dya,
			zhb = zk + tb * dzb,
			yhb = ytb + tb * dyb;
		const semi = sys.semiApertureMm[k];
		const nAfter = sys.indexAfter[k];
		const mu = nBefore / nAfter;
		const nza = 1 - c * (zha - zk),
			nya = -c * yha,
			nzb = 1 - c * (zhb - zk),
			nyb = -c * yhb;
		const cosIa = dza * nza + dya * nya,
			cosIb = dzb * nzb + dyb * nyb;
		const k2a = 1 - mu * mu * (1 - cosIa * cosIa),
			k2b = 1 - mu * mu * (1 - cosIb * cosIb);
		// Either ray missed, meets the surface behind it, is clipped or reflected (or may be): each
		// goes on alone from before this surface, with the same steps (traceFrom sets its status).
		const lost = !(dza > 0) || !(dzb > 0) || !(dena > 0) || !(denb > 0) || t0a + ta < -BEHIND_TOL_MM || t0b + tb < -BEHIND_TOL_MM;
		if (lost || Math.abs(yha) > semi || Math.abs(yhb) > semi || k2a < 0 || k2b < 0) {
			traceFrom(sys, a, za, ya, dza, dya, nBefore, k, null, true);
			traceFrom(sys, b, zb, yb, dzb, dyb, nBefore, k, null, true);
			return;
		}
		za = zha;
		ya = yha;
		zb = zhb;
		yb = yhb;
		const cpa = cosIa >= 0 ? Math.sqrt(k2a) : -Math.sqrt(k2a),
			cpb = cosIb >= 0 ? Math.sqrt(k2b) : -Math.sqrt(k2b);
		const ga = cpa - mu * cosIa,
			gb = cpb - mu * cosIb;
		dza = mu * dza + ga * nza;
		dya = mu * dya + ga * nya;
		dzb = mu * dzb + gb * nzb;
		dyb = mu * dyb + gb * nyb;
		nBefore = nAfter;
	}
	stop(a, za, ya, dza, dya, TRACE_OK, -1);
	stop(b, zb, yb, dzb, dyb, TRACE_OK, -1);
}

function stop(ray: Float64Array, z: number, y: number, dz: number, dy: number, status: number, k: number): number {
	ray[0] = z;
	ray[1] = y;
	ray[2] = dz;
	ray[3] = dy;
	ray[4] = status;
	ray[5] = k;
	return status;
}

/**
 * Sets `ray` to start at the object point (0, objectYMm) with direction sine
 * `sinAngle` (the sine of the angle to the axis, + upwards). Returns false (and leaves
 * the ray untouched) when |sinAngle| ≥ 1.
 */
export function startRay(ray: Float64Array, objectYMm: number, sinAngle: number): boolean {
	if (!(Math.abs(sinAngle) < 1)) return false;
	ray[0] = 0;
	ray[1] = objectYMm;
	ray[2] = Math.sqrt(1 - sinAngle * sinAngle);
	ray[3] = sinAngle;
	ray[4] = TRACE_OK;
	ray[5] = -1;
	return true;
}

/**
 * Height of a traced ray (state after the last surface) at the plane z = zMm, mm.
 * Null when the ray runs parallel to that plane.
 */
export function heightAtPlane(ray: Float64Array, zMm: number): number | null {
	if (!(Math.abs(ray[2]) > 1e-15)) return null;
	return ray[1] + ((zMm - ray[0]) * ray[3]) / ray[2];
}

/**
 * Where a real ray from the axial object point, leaving at direction sine `sinAngle`,
 * crosses the axis after the last surface (z from the object plane, mm). As
 * sinAngle → 0 this tends to the paraxial image; its shift is the longitudinal
 * spherical aberration. Null when the ray fails or leaves parallel to the axis.
 */
export function axialCrossingMm(sys: TraceSystem, sinAngle: number): number | null {
	const ray = new Float64Array(RAY_STRIDE);
	if (!startRay(ray, 0, sinAngle) || traceRay(sys, ray) !== TRACE_OK) return null;
	if (!(Math.abs(ray[3]) > 1e-300)) return null;
	return ray[0] - (ray[1] * ray[2]) / ray[3];
}

/** Numbers in a skew-ray state buffer: x, y, z, dirX, dirY, dirZ, status, surface. */
export const SKEW_STRIDE = 8;

/**
 * Traces the skew ray in `ray` ([x, y, z, dirX, dirY, dirZ] with a unit direction, in air
 * before the first surface) through every surface, in place, with the same rules as
 * `traceRay` (clipped at each surface's semi-aperture by the radial distance √(x² + y²),
 * lost when it misses a surface or would meet it behind its last point). On return ray[6]
 * is the status and ray[7] the surface where it stopped (−1 when it passed all). Allocates
 * nothing.
 *
 * Intersection: to the vertex tangent plane, then t = F / (B + √(B² − cF)) with
 * F = c(X² + Y²), B = dirZ − c(X·dirX + Y·dirY); refraction as in `traceRay` with the
 * normal N = (−cX, −cY, 1 − cZ) (Z from the vertex).
 */
export function traceSkewRay(sys: TraceSystem, ray: Float64Array): number {
	return skewFrom(sys, ray, ray[0], ray[1], ray[2], ray[3], ray[4], ray[5], 1, 0);
}

/** `traceSkewRay` of a ray at (x, y, z) with direction (dx, dy, dz) in index nBefore, from surface k0 on. */
function skewFrom(sys: TraceSystem, ray: Float64Array, x: number, y: number, z: number, dx: number, dy: number, dz: number, nBefore: number, k0: number): number {
	let status = TRACE_OK,
		at = -1;
	for (let k = k0; k < sys.count; k++) {
		if (!(dz > 0)) {
			status = TRACE_MISSED;
			at = k;
			break;
		}
		const c = sys.curvaturePerMm[k];
		const t0 = (sys.zMm[k] - z) / dz;
		z = sys.zMm[k];
		x += t0 * dx;
		y += t0 * dy;
		const f = c * (x * x + y * y);
		const b = dz - c * (x * dx + y * dy);
		const disc = b * b - c * f;
		const den = disc >= 0 ? b + Math.sqrt(disc) : -1;
		if (!(den > 0)) {
			status = TRACE_MISSED;
			at = k;
			break;
		}
		const t = f / den;
		if (t0 + t < -BEHIND_TOL_MM) {
			status = TRACE_BEHIND;
			at = k;
			break;
		}
		x += t * dx;
		y += t * dy;
		z += t * dz;
		const semi = sys.semiApertureMm[k];
		if (x * x + y * y > semi * semi) {
			status = TRACE_CLIPPED;
			at = k;
			break;
		}
		const nx = -c * x,
			ny = -c * y,
			nz = 1 - c * (z - sys.zMm[k]);
		const cosI = dx * nx + dy * ny + dz * nz;
		const nAfter = sys.indexAfter[k];
		const mu = nBefore / nAfter;
		const k2 = 1 - mu * mu * (1 - cosI * cosI);
		if (k2 < 0) {
			status = TRACE_TIR;
			at = k;
			break;
		}
		const g = (cosI >= 0 ? Math.sqrt(k2) : -Math.sqrt(k2)) - mu * cosI;
		dx = mu * dx + g * nx;
		dy = mu * dy + g * ny;
		dz = mu * dz + g * nz;
		nBefore = nAfter;
	}
	ray[0] = x;
	ray[1] = y;
	ray[2] = z;
	ray[3] = dx;
	ray[4] = dy;
	ray[5] = dz;
	ray[6] = status;
	ray[7] = at;
	return status;
}

/**
 * `traceSkewRay` of two rays at once: the same arithmetic ray by ray (the same results bit for
 * bit), the two dependency chains interleaved as in `traceRayPair`. Sets each ray's state and
 * status as `traceSkewRay` does.
 */
export function traceSkewRayPair(sys: TraceSystem, a: Float64Array, b: Float64Array): void {
	let xa = a[0],
		ya = a[1],
		za = a[2],
		dxa = a[3],
		dya = a[4],
		dza = a[5];
	let xb = b[0],
		yb = b[1],
		zb = b[2],
		dxb = b[3],
		dyb = b[4],
		dzb = b[5];
	let nBefore = 1;
	for (let k = 0; k < sys.count; k++) {
		const c = sys.curvaturePerMm[k],
			zk = sys.zMm[k];
		const t0a = (zk - za) / dza,
			t0b = (zk - zb) / dzb;
		const xta = xa + t0a * dxa,
			yta = ya + t0a * dya,
			xtb = xb + t0b * dxb,
			ytb = yb + t0b * dyb;
		const fa = c * (xta * xta + yta * yta),
			fb = c * (xtb * xtb + ytb * ytb);
		const ba = dza - c * (xta * dxa + yta * dya),
			bb = dzb - c * (xtb * dxb + ytb * dyb);
		const da = ba * ba - c * fa,
			db = bb * bb - c * fb;
		const dena = da >= 0 ? ba + Math.sqrt(da) : -1,
			denb = db >= 0 ? bb + Math.sqrt(db) : -1;
		const ta = fa / dena,
			tb = fb / denb;
		const xha = xta + ta * dxa,
			yha = yta + ta * dya,
			zha = zk + ta * dza,
			xhb = xtb + tb * dxb,
			yhb = ytb + tb * dyb,
			zhb = zk + tb * dzb;
		const semi = sys.semiApertureMm[k];
		const nxa = -c * xha,
			nya = -c * yha,
			nza = 1 - c * (zha - zk),
			nxb = -c * xhb,
			nyb = -c * yhb,
			nzb = 1 - c * (zhb - zk);
		const cosIa = dxa * nxa + dya * nya + dza * nza,
			cosIb = dxb * nxb + dyb * nyb + dzb * nzb;
		const nAfter = sys.indexAfter[k];
		const mu = nBefore / nAfter;
		const k2a = 1 - mu * mu * (1 - cosIa * cosIa),
			k2b = 1 - mu * mu * (1 - cosIb * cosIb);
		// Either ray missed, meets the surface behind it, is clipped or reflected (or may be): each
		// goes on alone from before this surface, with the same steps (skewFrom sets its status).
		const lost = !(dza > 0) || !(dzb > 0) || !(dena > 0) || !(denb > 0) || t0a + ta < -BEHIND_TOL_MM || t0b + tb < -BEHIND_TOL_MM;
		if (lost || xha * xha + yha * yha > semi * semi || xhb * xhb + yhb * yhb > semi * semi || k2a < 0 || k2b < 0) {
			skewFrom(sys, a, xa, ya, za, dxa, dya, dza, nBefore, k);
			skewFrom(sys, b, xb, yb, zb, dxb, dyb, dzb, nBefore, k);
			return;
		}
		const ga = (cosIa >= 0 ? Math.sqrt(k2a) : -Math.sqrt(k2a)) - mu * cosIa,
			gb = (cosIb >= 0 ? Math.sqrt(k2b) : -Math.sqrt(k2b)) - mu * cosIb;
		xa = xha;
		ya = yha;
		za = zha;
		xb = xhb;
		yb = yhb;
		zb = zhb;
		dxa = mu * dxa + ga * nxa;
		dya = mu * dya + ga * nya;
		dza = mu * dza + ga * nza;
		dxb = mu * dxb + gb * nxb;
		dyb = mu * dyb + gb * nyb;
		dzb = mu * dzb + gb * nzb;
		nBefore = nAfter;
	}
	skewState(a, xa, ya, za, dxa, dya, dza);
	skewState(b, xb, yb, zb, dxb, dyb, dzb);
}

/** Writes a skew ray's state after the last surface, passed (TRACE_OK). */
function skewState(r: Float64Array, x: number, y: number, z: number, dx: number, dy: number, dz: number): void {
	r[0] = x;
	r[1] = y;
	r[2] = z;
	r[3] = dx;
	r[4] = dy;
	r[5] = dz;
	r[6] = TRACE_OK;
	r[7] = -1;
}
