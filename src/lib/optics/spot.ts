/**
 * Ray fans, RMS spot radii, vignetting against the clear apertures, and the Airy radius:
 * the figures the solver ranks by.
 *
 * Fans are set by the object-side NA (object in air, NA = sin θ of the marginal ray).
 * Each field point's cone is NA wide in direction sine around its chief ray; the chief
 * ray aims at the axial point of the pupil plane z = pupilZMm (default: the first
 * surface's vertex, right for a stop at or near the first part).
 */
import {
	type TraceSystem,
	RAY_STRIDE,
	SKEW_STRIDE,
	TRACE_OK,
	TRACE_MISSED,
	TRACE_BEHIND,
	traceRay,
	traceSkewRay,
	startRay,
	heightAtPlane
} from './raytrace';

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

function firstVertex(sys: TraceSystem): number {
	return sys.count > 0 ? sys.zMm[0] : 0;
}

/** Height of one ray at `zMm`, or null when it fails. */
function landing(sys: TraceSystem, objectYMm: number, sinAngle: number, zMm: number): number | null {
	if (!startRay(scratch, objectYMm, sinAngle) || traceRay(sys, scratch) !== TRACE_OK) return null;
	return heightAtPlane(scratch, zMm);
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
	for (let k = 1; k <= K; k++) {
		const rho = Math.sqrt((k - 0.5) / K);
		const y = landing(sys, 0, rho * options.na, zImg);
		if (y === null) failed++;
		else {
			sum2 += y * y;
			traced++;
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
	const chief = landing(sys, objectHeightMm, sinChief, zImg);
	if (chief === null) return null;
	let sum = 0,
		sum2 = 0,
		traced = 0,
		failed = 0;
	for (let k = 1; k <= K; k++) {
		const rho = -1 + (2 * k - 1) / K;
		const y = landing(sys, objectHeightMm, sinChief + rho * options.na, zImg);
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

/** Bisection steps of `axialCone` (the limit is found to 2⁻³⁶ of a direction sine). */
const CONE_STEPS = 36;

/**
 * Finds the aperture stop and the axial cone it passes: the largest direction sine u whose
 * real ray from the axial object point passes every surface (clear apertures, glass edges,
 * no miss, nothing behind), by bisection on u in (0, 0.999); the surface that stops the ray
 * just beyond that limit is the aperture stop. The cone passed is min(requested, limit). It
 * assumes the rays that pass form one disc (no ray passes beyond the first that is stopped),
 * true for centred systems of lenses without a central obstruction.
 */
export function axialCone(sys: TraceSystem, requestedSine: number): AxialCone {
	const ray = new Float64Array(RAY_STRIDE);
	const passes = (u: number) => startRay(ray, 0, u) && traceRay(sys, ray) === TRACE_OK;
	let lo = 0,
		hi = 0.999;
	if (passes(hi)) return { requestedSine, passedSine: requestedSine, stopSurface: -1, lostFraction: 0 };
	let stopSurface = ray[5];
	for (let i = 0; i < CONE_STEPS; i++) {
		const mid = 0.5 * (lo + hi);
		if (passes(mid)) lo = mid;
		else {
			hi = mid;
			stopSurface = ray[5];
		}
	}
	const passedSine = Math.min(requestedSine, lo);
	const ratio = passedSine / requestedSine;
	return { requestedSine, passedSine, stopSurface, lostFraction: Math.max(0, 1 - ratio * ratio) };
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

/** The field point's spot from a pupil grid of skew rays. */
export interface GridSpot {
	/** 'skew-grid': RMS radius in two dimensions over a grid of skew rays. */
	readonly kind: 'skew-grid';
	/** RMS radius about the centroid of the rays that arrive, mm (the figure ranked by). */
	readonly rmsAboutCentroidMm: number;
	/** RMS radius about the landing point of the chief ray, mm (null when the chief ray is lost). */
	readonly rmsAboutChiefMm: number | null;
	/** Centroid height in the evaluation plane, mm (x = 0 by symmetry). */
	readonly centroidMm: number;
	/** Grid rays that arrive (each counts twice: the grid is mirrored about the meridional plane). */
	readonly raysTraced: number;
	/** Grid rays lost at an aperture, by a miss, behind a surface or by total internal reflection. */
	readonly raysFailed: number;
	/** Fraction of the grid's disc of directions that arrives (raysTraced over all grid rays). */
	readonly passedFraction: number;
}

/** Options of `fieldGridSpot`. */
export interface GridOptions {
	/** Direction sine of the chief ray (the centre of the cone), in the meridional plane. */
	readonly sinChief: number;
	/** Radius of the cone in direction sines (the disc of (L, M − sin θc) sampled). */
	readonly radiusSine: number;
	/** Grid cells across the disc's diameter (even; default 16: about 200 rays, 100 traced). */
	readonly grid?: number;
	/** Evaluation plane (default: the system's image plane). */
	readonly imageZMm?: number;
}

const skew = new Float64Array(SKEW_STRIDE);

/**
 * RMS spot of the object point (0, `objectHeightMm`) from a square grid of skew rays over a
 * disc of directions: direction cosines L = r·pₓ, M = sin θc + r·p_y with (pₓ, p_y) the
 * centres of the cells of an n × n grid over [−1, 1]² that lie in the unit disc, r the
 * cone's radius in direction sines. Equal power per cell (a Lambertian object radiates
 * equal power per unit of direction-cosine area). The system is symmetric about the
 * meridional plane, so only pₓ > 0 is traced and each ray stands for its mirror image too
 * (the centroid lies in the meridional plane). Rays lost anywhere are left out of the spot
 * and counted. Null-free: when no ray arrives the figures are NaN and `raysTraced` 0.
 */
export function fieldGridSpot(sys: TraceSystem, objectHeightMm: number, options: GridOptions): GridSpot {
	const n = Math.max(2, 2 * Math.round((options.grid ?? 16) / 2));
	const zImg = options.imageZMm ?? sys.imageZMm;
	const step = 2 / n;
	let all = 0,
		traced = 0,
		sx2 = 0,
		sy = 0,
		sy2 = 0;
	for (let i = 0; i < n / 2; i++) {
		const px = (i + 0.5) * step;
		for (let j = 0; j < n; j++) {
			const py = -1 + (j + 0.5) * step;
			if (px * px + py * py > 1) continue;
			all++;
			const L = options.radiusSine * px,
				M = options.sinChief + options.radiusSine * py;
			const N2 = 1 - L * L - M * M;
			if (!(N2 > 0)) continue;
			skew[0] = 0;
			skew[1] = objectHeightMm;
			skew[2] = 0;
			skew[3] = L;
			skew[4] = M;
			skew[5] = Math.sqrt(N2);
			if (traceSkewRay(sys, skew) !== TRACE_OK) continue;
			const dz = skew[5];
			if (!(Math.abs(dz) > 1e-15)) continue;
			const t = (zImg - skew[2]) / dz;
			const x = skew[0] + t * skew[3],
				y = skew[1] + t * skew[4];
			traced++;
			sx2 += x * x;
			sy += y;
			sy2 += y * y;
		}
	}
	const mean = traced > 0 ? sy / traced : NaN;
	const meanR2 = traced > 0 ? (sx2 + sy2) / traced : NaN;
	const chief = landing(sys, objectHeightMm, options.sinChief, zImg);
	const aboutChief = chief === null || traced === 0 ? null : Math.sqrt(Math.max(0, (sx2 + sy2 - 2 * chief * sy) / traced + chief * chief));
	return {
		kind: 'skew-grid',
		rmsAboutCentroidMm: Math.sqrt(Math.max(0, meanR2 - mean * mean)),
		rmsAboutChiefMm: aboutChief,
		centroidMm: mean,
		raysTraced: traced,
		raysFailed: all - traced,
		passedFraction: all > 0 ? traced / all : 0
	};
}

/**
 * Combines spots of one field point at several wavelengths, equal weight each, into the RMS
 * radius about the common centroid: the mean over the wavelengths of the mean square radius
 * about the origin, less the square of the mean centroid (x centroids are 0 by symmetry).
 * `spots` gives each wavelength's RMS about its own centroid and that centroid's height;
 * null when a wavelength has no ray.
 */
export function combinedRmsMm(spots: readonly { rmsAboutCentroidMm: number; centroidMm: number }[]): number | null {
	if (spots.length === 0) return null;
	let m = 0,
		r2 = 0;
	for (const s of spots) {
		if (!Number.isFinite(s.rmsAboutCentroidMm) || !Number.isFinite(s.centroidMm)) return null;
		m += s.centroidMm;
		r2 += s.rmsAboutCentroidMm * s.rmsAboutCentroidMm + s.centroidMm * s.centroidMm;
	}
	m /= spots.length;
	r2 /= spots.length;
	return Math.sqrt(Math.max(0, r2 - m * m));
}

/**
 * The part of a field point's requested cone that the apertures pass, as an ellipse in direction
 * sines (L, M): centre (0, centreSine), half-width along L, half-height along M. The requested
 * cone is the disc of radius `requestedSine` around the chief ray's direction sine.
 */
export interface PupilEllipse {
	readonly chiefSine: number;
	readonly requestedSine: number;
	readonly centreSine: number;
	readonly halfWidthSine: number;
	readonly halfHeightSine: number;
}

const probe = new Float64Array(SKEW_STRIDE);

/** True when the skew ray from (0, h, 0) with direction sines (L, M) passes every surface. */
function passesDirection(sys: TraceSystem, h: number, L: number, M: number): boolean {
	const n2 = 1 - L * L - M * M;
	if (!(n2 > 0)) return false;
	probe[0] = 0;
	probe[1] = h;
	probe[2] = 0;
	probe[3] = L;
	probe[4] = M;
	probe[5] = Math.sqrt(n2);
	return traceSkewRay(sys, probe) === TRACE_OK;
}

/** Largest d in [0, max] with pass(d), by bisection from a passing d = 0 (the region is taken to be connected). */
function extent(pass: (d: number) => boolean, max: number): number {
	if (!(max > 0)) return 0;
	if (pass(max)) return max;
	let lo = 0,
		hi = max;
	for (let i = 0; i < 22; i++) {
		const mid = 0.5 * (lo + hi);
		if (pass(mid)) lo = mid;
		else hi = mid;
	}
	return lo;
}

/**
 * Finds the passed part of the requested cone of the object point at `objectHeightMm`: from the
 * chief ray (or, when the chief ray is lost, from the mean direction of the rays of a coarse grid
 * that pass), the extents along M up and down and along L (the widest of three chords), each
 * by bisection and never beyond the requested cone. Null when nothing of the cone passes (the
 * field point is blocked) or the passed rays do not surround a passing centre.
 */
export function edgePupil(sys: TraceSystem, objectHeightMm: number, sinChief: number, requestedSine: number): PupilEllipse | null {
	const h = objectHeightMm,
		na = requestedSine;
	let centre = sinChief;
	if (!passesDirection(sys, h, 0, centre)) {
		const n = 16,
			step = 2 / n;
		let sum = 0,
			count = 0;
		for (let i = 0; i < n / 2; i++) {
			for (let j = 0; j < n; j++) {
				const px = (i + 0.5) * step,
					py = -1 + (j + 0.5) * step;
				if (px * px + py * py > 1) continue;
				if (passesDirection(sys, h, na * px, sinChief + na * py)) {
					sum += sinChief + na * py;
					count++;
				}
			}
		}
		if (count === 0) return null;
		centre = sum / count;
		if (!passesDirection(sys, h, 0, centre)) return null;
	}
	const up = extent((d) => passesDirection(sys, h, 0, centre + d), sinChief + na - centre);
	const down = extent((d) => passesDirection(sys, h, 0, centre - d), centre - (sinChief - na));
	const mid = centre + (up - down) / 2,
		halfHeight = (up + down) / 2;
	let halfWidth = 0;
	for (const m of [mid - halfHeight / 2, mid, mid + halfHeight / 2]) {
		const room = Math.sqrt(Math.max(0, na * na - (m - sinChief) ** 2));
		if (passesDirection(sys, h, 0, m)) halfWidth = Math.max(halfWidth, extent((d) => passesDirection(sys, h, d, m), room));
	}
	return { chiefSine: sinChief, requestedSine: na, centreSine: mid, halfWidthSine: halfWidth, halfHeightSine: halfHeight };
}

/** A field point's spot over its passed cone (`pupilSpot`). */
export interface PupilSpot {
	/** RMS radius about the centroid, in two dimensions, mm (NaN when no ray arrives). */
	readonly rmsAboutCentroidMm: number;
	/** Centroid height in the evaluation plane, mm (x = 0 by symmetry). */
	readonly centroidMm: number;
	/** Sample rays that arrive (each stands for itself and its mirror image). */
	readonly raysTraced: number;
	/** Sample rays inside the requested cone that are lost. */
	readonly raysFailed: number;
	/** Share of the requested cone (disc of radius requestedSine) that passes, 0–1. */
	readonly passedShare: number;
}

/** Size of the sampled ellipse over the extents found (1: the outer ring sits at the midpoint, in area, of the last band inside the rim). */
const PUPIL_MARGIN = 1;

/**
 * RMS spot of the object point at `objectHeightMm` over the ellipse `pupil` of direction sines:
 * `rings` rings of equal area (ρₖ = √((k − ½)/K)) times `spokes` equal angles over the half
 * plane L > 0 (each sample mirrored about the meridional plane), mapped onto the ellipse
 * (an affine map keeps equal areas equal: equal power per sample for a Lambertian object).
 * Samples outside the requested cone are not part of the question and are skipped; those inside
 * that are lost count against the passed share. Sampling the passed region itself, rather than
 * a square grid over the whole cone, keeps the rim of the stop on the rim of the samples.
 */
export function pupilSpot(sys: TraceSystem, objectHeightMm: number, pupil: PupilEllipse, options: { rings?: number; spokes?: number; imageZMm?: number } = {}): PupilSpot {
	const K = options.rings ?? 12,
		J = options.spokes ?? 8;
	const zImg = options.imageZMm ?? sys.imageZMm;
	const ax = pupil.halfWidthSine * PUPIL_MARGIN,
		ay = pupil.halfHeightSine * PUPIL_MARGIN;
	const na2 = pupil.requestedSine * pupil.requestedSine;
	let traced = 0,
		failed = 0,
		sx2 = 0,
		sy = 0,
		sy2 = 0;
	for (let k = 1; k <= K; k++) {
		const rho = Math.sqrt((k - 0.5) / K);
		for (let j = 0; j < J; j++) {
			const th = ((j + 0.5) * Math.PI) / J;
			const L = ax * rho * Math.sin(th),
				M = pupil.centreSine + ay * rho * Math.cos(th);
			if (L * L + (M - pupil.chiefSine) ** 2 > na2) continue;
			if (!passesDirection(sys, objectHeightMm, L, M)) {
				failed++;
				continue;
			}
			const dz = probe[5];
			if (!(Math.abs(dz) > 1e-15)) {
				failed++;
				continue;
			}
			const t = (zImg - probe[2]) / dz;
			const x = probe[0] + t * probe[3],
				y = probe[1] + t * probe[4];
			traced++;
			sx2 += x * x;
			sy += y;
			sy2 += y * y;
		}
	}
	const mean = traced > 0 ? sy / traced : NaN;
	const meanR2 = traced > 0 ? (sx2 + sy2) / traced : NaN;
	const passedShare = na2 > 0 ? Math.min(1, (traced * ax * ay) / (K * J * na2)) : 0;
	return { rmsAboutCentroidMm: Math.sqrt(Math.max(0, meanR2 - mean * mean)), centroidMm: mean, raysTraced: traced, raysFailed: failed, passedShare };
}
