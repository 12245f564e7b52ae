/**
 * Ray fans, RMS spot radii, vignetting against the clear apertures, and the Airy radius:
 * the figures the solver ranks by.
 *
 * Fans are set by the object-side NA (object in air, NA = sin θ of the marginal ray).
 * Each field point's cone is NA wide in direction sine around its chief ray; the chief
 * ray aims at the axial point of the pupil plane z = pupilZMm (default: the first
 * surface's vertex, right for a stop at or near the first part).
 */
import { type TraceSystem, RAY_STRIDE, TRACE_OK, TRACE_MISSED, TRACE_BEHIND, traceRay, traceRayPair, startRay, heightAtPlane } from './raytrace';

/** Options shared by the spot and aperture functions. */
export interface FanOptions {
	/** Object-side numerical aperture of the marginal ray (0 < NA < 1). */
	readonly na: number;
	/** Plane the spot is evaluated in, z from the object plane (default: the system's image plane). */
	readonly imageZMm?: number;
	/** Pupil plane the chief ray aims at (default: first surface vertex). */
	readonly pupilZMm?: number;
	/** Rays per fan (default 32). */
	readonly rays?: number;
}

/** An RMS spot figure with its sampling stated. */
export interface SpotResult {
	/** 'axial-area-weighted': true 2-D RMS on axis; 'tangential': 1-D RMS of the tangential fan. */
	readonly kind: 'axial-area-weighted' | 'tangential';
	/** RMS of the ray heights about the chief ray's height, mm. */
	readonly rmsAboutChiefMm: number;
	/** RMS about the centroid of the rays, mm. */
	readonly rmsAboutCentroidMm: number;
	/** Centroid height in the evaluation plane, mm. */
	readonly centroidMm: number;
	/** Chief ray height in the evaluation plane, mm. */
	readonly chiefMm: number;
	/** Rays that reached the plane. */
	readonly raysTraced: number;
	/** Rays that missed a surface, met total internal reflection or had no direction. */
	readonly raysFailed: number;
}

const scratch = new Float64Array(RAY_STRIDE);
/** A second ray state, for two rays traced together (`traceRayPair`). */
const scratch2 = new Float64Array(RAY_STRIDE);

function firstVertex(sys: TraceSystem): number {
	return sys.count > 0 ? sys.zMm[0] : 0;
}

/** Height at `zMm` of the meridional ray from (0, objectYMm) with direction sine `sinAngle`, or null when it is lost. */
export function landingHeight(sys: TraceSystem, objectYMm: number, sinAngle: number, zMm: number): number | null {
	if (!startRay(scratch, objectYMm, sinAngle) || traceRay(sys, scratch) !== TRACE_OK) return null;
	return heightAtPlane(scratch, zMm);
}

/** The landing height of a traced ray at the plane z = zMm (as `landingHeight`), null when it did not pass. */
function landed(ray: Float64Array, zMm: number): number | null {
	return ray[4] === TRACE_OK ? heightAtPlane(ray, zMm) : null;
}

/** Direction sine of ray k (1 … K) of the axial fan of sine `na`: pupil radius ρₖ = √((k − ½)/K) (see `axialSpot`). */
export function fanSine(k: number, K: number, na: number): number {
	return Math.sqrt((k - 0.5) / K) * na;
}

/**
 * RMS spot radius of the axial object point, in the plane `imageZMm`.
 *
 * Sampling rule: K rays of the meridional fan at normalised pupil radius
 * ρₖ = √((k − ½)/K), k = 1..K, direction sine ρₖ·NA: the midpoints of K rings of equal
 * area in the disc of direction sines (equal power per ring for a Lambertian object).
 * By rotational symmetry every ray of ring k lands at the same distance |yₖ| from the
 * axis, so the mean of yₖ² is the true 2-D mean square radius. The chief ray is the
 * axis and the 2-D centroid lies on the axis, so both RMS figures coincide.
 * Null when no ray arrives.
 */
export function axialSpot(sys: TraceSystem, options: FanOptions): SpotResult | null {
	const K = options.rays ?? 32;
	const zImg = options.imageZMm ?? sys.imageZMm;
	let sum2 = 0,
		traced = 0,
		failed = 0;
	// Two rays at a time (the same rays as one by one), summed in order k = 1 … K.
	for (let k = 1; k <= K; k += 2) {
		const two = k < K;
		const u1 = fanSine(k, K, options.na),
			u2 = two ? fanSine(k + 1, K, options.na) : NaN;
		const pair = two && startRay(scratch, 0, u1) && startRay(scratch2, 0, u2);
		if (pair) traceRayPair(sys, scratch, scratch2);
		for (let q = 0; q < (two ? 2 : 1); q++) {
			const y = pair ? landed(q === 0 ? scratch : scratch2, zImg) : landingHeight(sys, 0, q === 0 ? u1 : u2, zImg);
			if (y === null) failed++;
			else {
				sum2 += y * y;
				traced++;
			}
		}
	}
	if (traced === 0) return null;
	const rms = Math.sqrt(sum2 / traced);
	return {
		kind: 'axial-area-weighted',
		rmsAboutChiefMm: rms,
		rmsAboutCentroidMm: rms,
		centroidMm: 0,
		chiefMm: 0,
		raysTraced: traced,
		raysFailed: failed
	};
}

/**
 * RMS spot of the off-axis object point at height `objectHeightMm`, in the plane
 * `imageZMm`, from its tangential fan only (no skew rays), labelled 'tangential'.
 *
 * Sampling rule: K rays with direction sines sin θc + ρₖ·NA, ρₖ = −1 + (2k − 1)/K
 * (midpoints of K equal steps across the fan), each weighted equally, where θc is the
 * chief ray's angle (aimed at the pupil centre). The result is the 1-D RMS of the
 * tangential section about the chief ray and about the fan's centroid.
 * Null when the chief ray or every fan ray fails.
 */
export function tangentialSpot(sys: TraceSystem, objectHeightMm: number, options: FanOptions): SpotResult | null {
	const K = options.rays ?? 32;
	const zImg = options.imageZMm ?? sys.imageZMm;
	const sinChief = chiefSine(sys, objectHeightMm, options.pupilZMm);
	const chief = landingHeight(sys, objectHeightMm, sinChief, zImg);
	if (chief === null) return null;
	let sum = 0,
		sum2 = 0,
		traced = 0,
		failed = 0;
	for (let k = 1; k <= K; k++) {
		const rho = -1 + (2 * k - 1) / K;
		const y = landingHeight(sys, objectHeightMm, sinChief + rho * options.na, zImg);
		if (y === null) failed++;
		else {
			const e = y - chief;
			sum += e;
			sum2 += e * e;
			traced++;
		}
	}
	if (traced === 0) return null;
	const mean = sum / traced;
	return {
		kind: 'tangential',
		rmsAboutChiefMm: Math.sqrt(sum2 / traced),
		rmsAboutCentroidMm: Math.sqrt(Math.max(0, sum2 / traced - mean * mean)),
		centroidMm: chief + mean,
		chiefMm: chief,
		raysTraced: traced,
		raysFailed: failed
	};
}

/** One traced ray of a fan, as a polyline for drawings. */
export interface FanRay {
	/** Normalised pupil coordinate ρ in [−1, 1] (0 = chief ray). */
	readonly rho: number;
	/** Direction sine at the object point. */
	readonly sinAngle: number;
	/** TRACE_OK, TRACE_MISSED or TRACE_TIR. */
	readonly status: number;
	/** Object point, each surface met, and (when it passed all) the point in the image plane; mm. */
	readonly points: readonly { readonly zMm: number; readonly yMm: number }[];
}

/**
 * The tangential fan of the object point at `objectHeightMm` as polylines: `count` rays
 * with ρ evenly from −1 to 1 (direction sines sin θc + ρ·NA, the chief ray aimed at the
 * pupil centre), each from the object point through every surface it meets to the
 * image plane. Failed rays end at the surface where they stopped, with their status.
 */
export function traceFan(sys: TraceSystem, objectHeightMm: number, options: FanOptions & { count?: number }): FanRay[] {
	const count = Math.max(2, options.count ?? 7);
	const zImg = options.imageZMm ?? sys.imageZMm;
	const sc = chiefSine(sys, objectHeightMm, options.pupilZMm);
	const heightsMm = new Float64Array(sys.count);
	const ray = new Float64Array(RAY_STRIDE);
	const fan: FanRay[] = [];
	for (let k = 0; k < count; k++) {
		const rho = -1 + (2 * k) / (count - 1);
		const sinAngle = sc + rho * options.na;
		const points = [{ zMm: 0, yMm: objectHeightMm }];
		if (!startRay(ray, objectHeightMm, sinAngle)) {
			fan.push({ rho, sinAngle, status: TRACE_MISSED, points });
			continue;
		}
		const status = traceRay(sys, ray, heightsMm);
		const reached = status === TRACE_OK ? sys.count : ray[5] + (status === TRACE_MISSED || status === TRACE_BEHIND ? 0 : 1);
		for (let s = 0; s < reached; s++) points.push({ zMm: surfaceZ(sys, s, heightsMm[s]), yMm: heightsMm[s] });
		if (status === TRACE_OK) {
			const y = heightAtPlane(ray, zImg);
			if (y !== null) points.push({ zMm: zImg, yMm: y });
		}
		fan.push({ rho, sinAngle, status, points });
	}
	return fan;
}

/** z of surface `s` at height y (vertex plus sag), mm. */
function surfaceZ(sys: TraceSystem, s: number, yMm: number): number {
	const c = sys.curvaturePerMm[s];
	const q = 1 - c * c * yMm * yMm;
	return sys.zMm[s] + (q >= 0 ? (c * yMm * yMm) / (1 + Math.sqrt(q)) : 0);
}

/** Direction sine of the chief ray from (0, objectHeightMm) to the pupil centre. */
export function chiefSine(sys: TraceSystem, objectHeightMm: number, pupilZMm?: number): number {
	const zp = pupilZMm ?? firstVertex(sys);
	return -objectHeightMm / Math.hypot(zp, objectHeightMm);
}

/** Ray heights at one surface against its clear aperture. */
export interface SurfaceClearance {
	/** Surface index in the trace system. */
	readonly surface: number;
	/** Clear semi-aperture, mm (Infinity when unknown). */
	readonly semiApertureMm: number;
	/** |height| of the axial marginal ray (direction sine NA), mm; null if it failed before. */
	readonly marginalMm: number | null;
	/** |height| of the chief ray from the field edge, mm; null if it failed before. */
	readonly chiefMm: number | null;
	/** Largest |height| of the field edge's rim rays (sin θc ± NA), mm; null if both failed. */
	readonly edgeRimMm: number | null;
	/** Some of these rays pass outside the clear aperture here. */
	readonly vignetted: boolean;
}

/** Vignetting report of a fan configuration. */
export interface ApertureReport {
	/** One entry per surface, in order. */
	readonly surfaces: readonly SurfaceClearance[];
	/** Any surface vignettes. */
	readonly vignetted: boolean;
	/** A ray of the report missed a surface or met total internal reflection. */
	readonly raysFailed: number;
}

function heights(sys: TraceSystem, objectYMm: number, sinAngle: number): { h: Float64Array; upTo: number } {
	const h = new Float64Array(sys.count);
	const ray = new Float64Array(RAY_STRIDE);
	if (!startRay(ray, objectYMm, sinAngle)) return { h, upTo: 0 };
	// Not clipped: the report says how far outside each aperture the requested rays would pass.
	const status = traceRay(sys, ray, h, false);
	return { h, upTo: status === TRACE_OK ? sys.count : ray[5] };
}

/**
 * The marginal ray (axial point, direction sine NA), the chief ray and the two rim rays
 * of the field edge (`objectHeightMm`), heights at every surface against its clear
 * aperture, traced through the apertures (not clipped): how far outside each aperture the
 * requested rays would pass. The figures themselves come from clipped rays (`axialCone`,
 * `fieldGridSpot`).
 */
export function apertureReport(sys: TraceSystem, objectHeightMm: number, options: FanOptions): ApertureReport {
	const sc = chiefSine(sys, objectHeightMm, options.pupilZMm);
	const marginal = heights(sys, 0, options.na);
	const chief = heights(sys, objectHeightMm, sc);
	const upper = heights(sys, objectHeightMm, sc + options.na);
	const lower = heights(sys, objectHeightMm, sc - options.na);
	const traces = [marginal, chief, upper, lower];
	const failed = traces.filter((t) => t.upTo < sys.count).length;
	const at = (t: { h: Float64Array; upTo: number }, k: number) => (k < t.upTo ? Math.abs(t.h[k]) : null);
	const surfaces: SurfaceClearance[] = [];
	let any = false;
	for (let k = 0; k < sys.count; k++) {
		const semi = sys.semiApertureMm[k];
		const m = at(marginal, k),
			c = at(chief, k),
			u = at(upper, k),
			l = at(lower, k);
		const rim = u === null ? l : l === null ? u : Math.max(u, l);
		const vignetted = [m, c, rim].some((v) => v !== null && v > semi);
		any ||= vignetted;
		surfaces.push({ surface: k, semiApertureMm: semi, marginalMm: m, chiefMm: c, edgeRimMm: rim, vignetted });
	}
	return { surfaces, vignetted: any, raysFailed: failed };
}

/**
 * Airy radius (first dark ring of a diffraction-limited spot), mm: r = 1.22·λ·N with
 * λ in nm and N the working f-number in image space (Born & Wolf, Principles of Optics,
 * 7th ed. 1999, §8.5.2, the first zero of J₁ at 3.8317 = 1.2197·π; from memory).
 */
export function airyRadiusMm(wavelengthNm: number, workingFNumber: number): number {
	return 1.22 * wavelengthNm * 1e-6 * workingFNumber;
}

/** Working f-number N = 1/(2·NA') from the image-side NA (paraxial, image in air). */
export function workingFNumber(imageSideNA: number): number {
	return 1 / (2 * imageSideNA);
}

/** Image-side NA of an imaging system in air: NA' = NA/|m| (paraxial; the sine condition). */
export function imageSideNA(objectNA: number, magnification: number): number {
	return objectNA / Math.abs(magnification);
}

/** The cone of the axial object point that the apertures pass. */
export interface AxialCone {
	/** Direction sine asked for (the question's NA). */
	readonly requestedSine: number;
	/** Largest direction sine, at most the one asked for, whose ray passes every surface. */
	readonly passedSine: number;
	/**
	 * The aperture stop: the surface that stops the axial cone as it opens (whether or not it
	 * cuts the cone asked for); −1 when no surface does below a direction sine of 0.999.
	 */
	readonly stopSurface: number;
	/** Fraction of the requested cone lost, 1 − (passed/requested)² (equal power per unit of direction-sine area). */
	readonly lostFraction: number;
}

/** The steepest axial ray `axialCone` tries (direction sine): when it passes, the whole cone asked for counts. */
export const CONE_TOP = 0.999;
/** Bisection steps of `axialCone` when the stop cuts the cone asked for (the limit to 2⁻³⁶ of the sine asked for). */
export const CONE_STEPS = 36;
/** Bisection steps when the whole cone asked for passes: only which surface stops the cone as it opens further is wanted. */
export const STOP_STEPS = 16;

/**
 * Finds the aperture stop and the axial cone it passes: the largest direction sine u whose
 * real ray from the axial object point passes every surface (clear apertures, glass edges,
 * no miss, nothing behind). When the rim ray of the cone asked for passes, the whole cone
 * counts, and a coarse bisection on u in (requested, 0.999) names the surface that stops the
 * cone as it opens further (the aperture stop; −1 when nothing stops it below 0.999). Else a
 * bisection on u in (0, requested) finds the limit, and the surface that stops the ray just
 * beyond it is the stop. It assumes the rays that pass form one disc (no ray passes beyond
 * the first that is stopped), true for centred systems of lenses without a central obstruction.
 */
export function axialCone(sys: TraceSystem, requestedSine: number): AxialCone {
	const ray = new Float64Array(RAY_STRIDE);
	const passes = (u: number) => startRay(ray, 0, u) && traceRay(sys, ray) === TRACE_OK;
	const top = CONE_TOP;
	const rim = Math.min(requestedSine, top);
	if (passes(rim)) {
		if (rim === top || passes(top)) return { requestedSine, passedSine: requestedSine, stopSurface: -1, lostFraction: 0 };
		// The whole cone asked for passes: only the stop's name is wanted, a coarse search above it will do.
		bisectCone(sys, rim, top, STOP_STEPS, ray[5]);
		return { requestedSine, passedSine: requestedSine, stopSurface: coneBisection[2], lostFraction: 0 };
	}
	bisectCone(sys, 0, rim, CONE_STEPS, ray[5]);
	const passedSine = Math.min(requestedSine, coneBisection[0]);
	const ratio = passedSine / requestedSine;
	return { requestedSine, passedSine, stopSurface: coneBisection[2], lostFraction: Math.max(0, 1 - ratio * ratio) };
}

/** After `bisectCone`: [the last sine that passed, the upper end of the interval, the surface that stopped the last one that did not]. */
export const coneBisection = new Float64Array(3);

/**
 * Bisection of `axialCone` on (lo, hi) by the axial ray's direction sine, into `coneBisection`.
 * Each midpoint is traced together with the next step's midpoint should it pass (`traceRayPair`:
 * the same rays), so a passing step costs no trace of its own. With `keep` > 0 (the solver's rank
 * bound) it gives up at the start of a step once (hi / requestedSine)² < keep, that is once the cone
 * it will find surely passes less than `keep` of the cone asked for, and returns false; else true.
 */
export function bisectCone(sys: TraceSystem, lo: number, hi: number, steps: number, stopSurface: number, requestedSine = 1, keep = 0): boolean {
	for (let i = 0; i < steps; i++) {
		if ((hi / requestedSine) * (hi / requestedSine) < keep) {
			setBisection(lo, hi, stopSurface);
			return false;
		}
		const mid = 0.5 * (lo + hi);
		const next = 0.5 * (mid + hi);
		const pair = i + 1 < steps && startRay(scratch, 0, mid) && startRay(scratch2, 0, next);
		if (pair) traceRayPair(sys, scratch, scratch2);
		else if (!startRay(scratch, 0, mid)) scratch[4] = TRACE_MISSED;
		else traceRay(sys, scratch);
		if (scratch[4] !== TRACE_OK) {
			hi = mid;
			stopSurface = scratch[5];
			continue;
		}
		lo = mid;
		if (!pair) continue;
		i++;
		if (scratch2[4] === TRACE_OK) lo = next;
		else {
			hi = next;
			stopSurface = scratch2[5];
		}
	}
	setBisection(lo, hi, stopSurface);
	return true;
}

function setBisection(lo: number, hi: number, stopSurface: number): void {
	coneBisection[0] = lo;
	coneBisection[1] = hi;
	coneBisection[2] = stopSurface;
}

/**
 * Direction sine of the real chief ray of the object point at `objectHeightMm`: the ray that
 * crosses the axis at the aperture stop (`stopSurface`), found by the secant method on its
 * height there (traced through the apertures: the chief ray is a reference, whether or not
 * it passes). With no stop (−1), or when the search does not converge, the ray aimed at the
 * first vertex (`chiefSine`).
 */
export function stopChiefSine(sys: TraceSystem, objectHeightMm: number, stopSurface: number): number {
	const first = chiefSine(sys, objectHeightMm);
	if (stopSurface <= 0 || objectHeightMm === 0) return first;
	const upTo: TraceSystem = { ...sys, count: stopSurface + 1 };
	const ray = new Float64Array(RAY_STRIDE);
	const h = new Float64Array(upTo.count);
	const heightAtStop = (u: number): number | null => {
		if (!startRay(ray, objectHeightMm, u)) return null;
		return traceRay(upTo, ray, h, false) === TRACE_OK ? h[stopSurface] : null;
	};
	let u0 = first,
		y0 = heightAtStop(u0);
	let u1 = first + 1e-4,
		y1 = heightAtStop(u1);
	for (let i = 0; i < 30 && y0 !== null && y1 !== null; i++) {
		if (Math.abs(y1) < 1e-10 || y1 === y0) return u1;
		const u2 = u1 - (y1 * (u1 - u0)) / (y1 - y0);
		u0 = u1;
		y0 = y1;
		u1 = u2;
		y1 = heightAtStop(u1);
	}
	return y1 !== null && Math.abs(y1) < 1e-6 ? u1 : first;
}
