/**
 * The spot of a field point in two dimensions, from skew rays: the part of its requested cone
 * that the apertures pass (`edgePupil`), sampled over that part (`pupilSpot`), or a square grid
 * over the whole cone (`fieldGridSpot`); and the RMS radius over several wavelengths
 * (`combinedRmsMm`). The statistic is the RMS radius about the centroid of the rays that arrive.
 */
import { type TraceSystem, SKEW_STRIDE, TRACE_OK, traceSkewRay, traceSkewRayPair } from './raytrace';
import { landingHeight } from './spot';

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

/** Scratch: where `landing` found the ray (x, y), and a sample's direction sines (L, M). */
const landed = new Float64Array(2);
const dir = new Float64Array(2);

/** Where the traced skew `ray` meets z = `zImg`, into landed[0..1]; false when it runs parallel to the plane. */
function landing(ray: Float64Array, zImg: number): boolean {
	const dz = ray[5];
	if (!(Math.abs(dz) > 1e-15)) return false;
	const t = (zImg - ray[2]) / dz;
	landed[0] = ray[0] + t * ray[3];
	landed[1] = ray[1] + t * ray[4];
	return true;
}

/** Running sums over the rays that reach the evaluation plane: x², y and y² (x centroids are 0 by symmetry). */
class Landings {
	n = 0;
	sx2 = 0;
	sy = 0;
	sy2 = 0;
	/** Adds where the traced skew `ray` meets z = `zImg`; false (nothing added) when it runs parallel to the plane. */
	add(ray: Float64Array, zImg: number): boolean {
		if (!landing(ray, zImg)) return false;
		this.addAt(landed[0], landed[1]);
		return true;
	}
	/** Adds a landing at (x, y). */
	addAt(x: number, y: number): void {
		this.n++;
		this.sx2 += x * x;
		this.sy += y;
		this.sy2 += y * y;
	}
	/** Centroid height, mm (NaN without a ray). */
	centroid(): number {
		return this.n > 0 ? this.sy / this.n : NaN;
	}
	/** RMS radius about the centroid, mm (NaN without a ray). */
	rmsAboutCentroid(): number {
		const mean = this.centroid();
		const meanR2 = this.n > 0 ? (this.sx2 + this.sy2) / this.n : NaN;
		return Math.sqrt(Math.max(0, meanR2 - mean * mean));
	}
}

/** Scratch of `gridDirections`: the grid cells' direction sines (L, M). */
let gridL = new Float64Array(0),
	gridM = new Float64Array(0);

/**
 * The cells of an n × n grid over [−1, 1]² whose centres (pₓ, p_y) lie in the unit disc, pₓ > 0
 * only, in order (pₓ outer, p_y inner), as direction sines L = r·pₓ, M = sin θc + r·p_y into
 * gridL and gridM; returns how many (see `fieldGridSpot`).
 */
function gridDirections(n: number, radiusSine: number, sinChief: number): number {
	if (gridL.length < (n * n) / 2) {
		gridL = new Float64Array((n * n) / 2);
		gridM = new Float64Array((n * n) / 2);
	}
	const step = 2 / n;
	let cells = 0;
	for (let i = 0; i < n / 2; i++) {
		const px = (i + 0.5) * step;
		for (let j = 0; j < n; j++) {
			const py = -1 + (j + 0.5) * step;
			if (px * px + py * py > 1) continue;
			gridL[cells] = radiusSine * px;
			gridM[cells++] = sinChief + radiusSine * py;
		}
	}
	return cells;
}

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
	const all = gridDirections(n, options.radiusSine, options.sinChief);
	const sums = new Landings();
	for (let c = 0; c < all; c++) if (passesDirection(sys, objectHeightMm, gridL[c], gridM[c])) sums.add(probe, zImg);
	const traced = sums.n;
	const chief = landingHeight(sys, objectHeightMm, options.sinChief, zImg);
	const aboutChief = chief === null || traced === 0 ? null : Math.sqrt(Math.max(0, (sums.sx2 + sums.sy2 - 2 * chief * sums.sy) / traced + chief * chief));
	return {
		kind: 'skew-grid',
		rmsAboutCentroidMm: sums.rmsAboutCentroid(),
		rmsAboutChiefMm: aboutChief,
		centroidMm: sums.centroid(),
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

const probe2 = new Float64Array(SKEW_STRIDE);

/** Sets `ray` to start at (0, h, 0) with direction sines (L, M) and cosine √n2 along z. */
function aim(ray: Float64Array, h: number, L: number, M: number, n2: number): void {
	ray[0] = 0;
	ray[1] = h;
	ray[2] = 0;
	ray[3] = L;
	ray[4] = M;
	ray[5] = Math.sqrt(n2);
}

/** True when the skew ray from (0, h, 0) with direction sines (L, M) passes every surface (traced into `probe`). */
function passesDirection(sys: TraceSystem, h: number, L: number, M: number): boolean {
	const n2 = 1 - L * L - M * M;
	if (!(n2 > 0)) return false;
	aim(probe, h, L, M, n2);
	return traceSkewRay(sys, probe) === TRACE_OK;
}

/**
 * `passesDirection` of two directions at once (`traceSkewRayPair`: the same rays): bit 1 set when
 * the first passes, bit 2 when the second does. The traced rays are left in `probe` and `probe2`.
 */
function passesTwo(sys: TraceSystem, h: number, L1: number, M1: number, L2: number, M2: number): number {
	const n1 = 1 - L1 * L1 - M1 * M1,
		n2 = 1 - L2 * L2 - M2 * M2;
	if (!(n1 > 0) || !(n2 > 0)) return (passesDirection(sys, h, L1, M1) ? 1 : 0) | (passesDirection(sys, h, L2, M2) ? 2 : 0);
	aim(probe, h, L1, M1, n1);
	aim(probe2, h, L2, M2, n2);
	traceSkewRayPair(sys, probe, probe2);
	return (probe[6] === TRACE_OK ? 1 : 0) | (probe2[6] === TRACE_OK ? 2 : 0);
}

/** Ways `extent` searches from a centre direction (L, M) = (0, base): up M, down M, or across L at M = base. */
const UP = 0,
	DOWN = 1,
	ACROSS = 2;
/** The direction at distance d from (0, base) the `way` given, into dir[0], dir[1] (the sums `edgePupil` always made). */
function along(way: number, base: number, d: number): void {
	dir[0] = way === ACROSS ? d : 0;
	dir[1] = way === UP ? base + d : way === DOWN ? base - d : base;
}

/** Bisection steps of `extent`. */
const EXTENT_STEPS = 22;

/**
 * Largest d in [0, max] whose direction (`along` the way given from (0, base)) passes, by
 * bisection from a passing d = 0 (the region is taken to be connected). Each midpoint is traced
 * together with the next step's midpoint should it pass (the same rays as one by one).
 */
function extent(sys: TraceSystem, h: number, way: number, base: number, max: number): number {
	if (!(max > 0)) return 0;
	along(way, base, max);
	if (passesDirection(sys, h, dir[0], dir[1])) return max;
	let lo = 0,
		hi = max;
	for (let i = 0; i < EXTENT_STEPS; i++) {
		const mid = 0.5 * (lo + hi);
		along(way, base, mid);
		if (i + 1 === EXTENT_STEPS) {
			if (passesDirection(sys, h, dir[0], dir[1])) lo = mid;
			else hi = mid;
			continue;
		}
		const L1 = dir[0],
			M1 = dir[1];
		const next = 0.5 * (mid + hi);
		along(way, base, next);
		const passed = passesTwo(sys, h, L1, M1, dir[0], dir[1]);
		if ((passed & 1) === 0) {
			hi = mid;
			continue;
		}
		lo = mid;
		i++;
		if ((passed & 2) !== 0) lo = next;
		else hi = next;
	}
	return lo;
}

/** Cells across the coarse grid `edgePupil` searches when the chief ray is lost (`fieldGridSpot`'s default grid). */
export const PUPIL_SEARCH_GRID = 16;

/**
 * Finds the passed part of the requested cone of the object point at `objectHeightMm`: from the
 * chief ray (or, when the chief ray is lost, from the mean direction of the rays of a coarse grid
 * that pass), the extents along M up and down and along L (the widest of three chords), each
 * by bisection and never beyond the requested cone. 'blocked' when the chief ray and every ray
 * of the coarse grid are lost: those are the rays `fieldGridSpot` traces with
 * PUPIL_SEARCH_GRID cells and radius `requestedSine`, so it would find nothing passes either.
 * Null when the passed rays do not surround a passing centre.
 */
export function edgePupil(sys: TraceSystem, objectHeightMm: number, sinChief: number, requestedSine: number): PupilEllipse | 'blocked' | null {
	const h = objectHeightMm,
		na = requestedSine;
	let centre = sinChief;
	if (!passesDirection(sys, h, 0, centre)) {
		let sum = 0,
			count = 0;
		// The cells inside the disc, in order, traced two at a time (the same rays, summed in the same order).
		const cells = gridDirections(PUPIL_SEARCH_GRID, na, sinChief);
		for (let c = 0; c < cells; c += 2) {
			const passed = c + 1 < cells ? passesTwo(sys, h, gridL[c], gridM[c], gridL[c + 1], gridM[c + 1]) : passesDirection(sys, h, gridL[c], gridM[c]) ? 1 : 0;
			for (let q = 0; q < 2 && c + q < cells; q++) {
				if ((passed & (1 << q)) === 0) continue;
				sum += gridM[c + q];
				count++;
			}
		}
		if (count === 0) return 'blocked';
		centre = sum / count;
		if (!passesDirection(sys, h, 0, centre)) return null;
	}
	const up = extent(sys, h, UP, centre, sinChief + na - centre);
	const down = extent(sys, h, DOWN, centre, centre - (sinChief - na));
	const mid = centre + (up - down) / 2,
		halfHeight = (up + down) / 2;
	let halfWidth = 0;
	for (const m of [mid - halfHeight / 2, mid, mid + halfHeight / 2]) {
		const room = Math.sqrt(Math.max(0, na * na - (m - sinChief) ** 2));
		if (passesDirection(sys, h, 0, m)) halfWidth = Math.max(halfWidth, extent(sys, h, ACROSS, m, room));
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
	/**
	 * False when `stopAboveMm` stopped the trace early: the RMS is then a lower bound of the
	 * spot's (and above `stopAboveMm`), the centroid that of the rays so far, and the ray counts
	 * and passed share are not known (NaN).
	 */
	readonly complete: boolean;
}

/** Size of the sampled ellipse over the extents found (1: the outer ring sits at the midpoint, in area, of the last band inside the rim). */
const PUPIL_MARGIN = 1;

/** Options of `pupilSpot`. */
export interface PupilSpotOptions {
	/** Rings of equal area (default 12). */
	rings?: number;
	/** Spokes over the half plane (default 8). */
	spokes?: number;
	/** Evaluation plane (default: the system's image plane). */
	imageZMm?: number;
	/**
	 * Stop as soon as the spot is surely larger than this RMS radius, mm (the solver's rank bound
	 * asks so): the answer is then a lower bound with `complete` false. Unless it stops, the
	 * figures are the same, bit for bit, as without this option.
	 */
	stopAboveMm?: number;
}

/**
 * Relative margin of the early stop's lower bound, and the least spot (as a fraction of the
 * centroid height) it stops on: the full figure's mean-square-less-centroid-square loses about
 * 1e-16 · (centroid / RMS)² of itself to rounding, so above 3e-5 of the centroid height the
 * margin covers it.
 */
const STOP_MARGIN = 1e-5;
const STOP_MIN_SPREAD = 3e-5;

/** Scratch of `pupilSpot`: per sample, 0 outside the cone, 1 landed (x, y), 2 lost. */
let sampleState = new Uint8Array(0);
let sampleX = new Float64Array(0);
let sampleY = new Float64Array(0);
/** Scratch of `pupilSpot`: per sample, its direction sines (L, M); and the samples inside the cone in the order traced. */
let sampleL = new Float64Array(0);
let sampleM = new Float64Array(0);
let sampleOrder = new Int32Array(0);

/**
 * RMS spot of the object point at `objectHeightMm` over the ellipse `pupil` of direction sines:
 * `rings` rings of equal area (ρₖ = √((k − ½)/K)) times `spokes` equal angles over the half
 * plane L > 0 (each sample mirrored about the meridional plane), mapped onto the ellipse
 * (an affine map keeps equal areas equal: equal power per sample for a Lambertian object).
 * Samples outside the requested cone are not part of the question and are skipped; those inside
 * that are lost count against the passed share. Sampling the passed region itself, rather than
 * a square grid over the whole cone, keeps the rim of the stop on the rim of the samples.
 */
export function pupilSpot(sys: TraceSystem, objectHeightMm: number, pupil: PupilEllipse, options: PupilSpotOptions = {}): PupilSpot {
	const K = options.rings ?? 12,
		J = options.spokes ?? 8;
	const zImg = options.imageZMm ?? sys.imageZMm;
	const ax = pupil.halfWidthSine * PUPIL_MARGIN,
		ay = pupil.halfHeightSine * PUPIL_MARGIN;
	const na2 = pupil.requestedSine * pupil.requestedSine;
	const share = (traced: number) => (na2 > 0 ? Math.min(1, (traced * ax * ay) / (K * J * na2)) : 0);
	/** Sample (k, j)'s direction sines into dir[0], dir[1]; false when it lies outside the requested cone. */
	const direction = (k: number, j: number): boolean => {
		const rho = Math.sqrt((k - 0.5) / K);
		const th = ((j + 0.5) * Math.PI) / J;
		dir[0] = ax * rho * Math.sin(th);
		dir[1] = pupil.centreSine + ay * rho * Math.cos(th);
		return !(dir[0] * dir[0] + (dir[1] - pupil.chiefSine) ** 2 > na2);
	};
	// Outer ring first (the aberrations grow outwards), each landing kept and summed at the end in the
	// usual order (rings inward out), so that the figures do not depend on the order traced. With
	// `stopAboveMm`: the RMS over all the rays that land is at least √(S / n), with S the squared
	// spread of the landed rays so far about their own centroid (the centroid minimises it) and n
	// the samples inside the cone (at least the rays that land).
	const stop = options.stopAboveMm ?? Infinity;
	if (sampleState.length < K * J) {
		sampleState = new Uint8Array(K * J);
		sampleX = new Float64Array(K * J);
		sampleY = new Float64Array(K * J);
		sampleL = new Float64Array(K * J);
		sampleM = new Float64Array(K * J);
		sampleOrder = new Int32Array(K * J);
	}
	// The samples inside the cone in the order traced (outer ring first), with their directions.
	let inside = 0;
	for (let k = K; k >= 1; k--) {
		for (let j = 0; j < J; j++) {
			const q = (k - 1) * J + j;
			sampleState[q] = 0;
			if (!direction(k, j)) continue;
			sampleState[q] = 2;
			sampleL[q] = dir[0];
			sampleM[q] = dir[1];
			sampleOrder[inside++] = q;
		}
	}
	let n = 0,
		x2 = 0,
		dy = 0,
		dy2 = 0,
		y0 = 0;
	// Two rays at a time (`passesTwo`: the same rays), each then taken in order as if traced alone.
	for (let t = 0; t < inside; t += 2) {
		const a = sampleOrder[t],
			b = t + 1 < inside ? sampleOrder[t + 1] : -1;
		const passed = b >= 0 ? passesTwo(sys, objectHeightMm, sampleL[a], sampleM[a], sampleL[b], sampleM[b]) : passesDirection(sys, objectHeightMm, sampleL[a], sampleM[a]) ? 1 : 0;
		for (let w = 0; w < 2; w++) {
			const q = w === 0 ? a : b;
			if (q < 0 || (passed & (1 << w)) === 0 || !landing(w === 0 ? probe : probe2, zImg)) continue;
			sampleState[q] = 1;
			const x = (sampleX[q] = landed[0]),
				y = (sampleY[q] = landed[1]);
			if (n === 0) y0 = y;
			n++;
			x2 += x * x;
			dy += y - y0;
			dy2 += (y - y0) * (y - y0);
			if (n < 2 || stop === Infinity) continue;
			const spread = Math.max(0, x2 + dy2 - (dy * dy) / n);
			const low = Math.sqrt(spread / inside) * (1 - STOP_MARGIN);
			const centroid = y0 + dy / n;
			if (low > stop && low > STOP_MIN_SPREAD * Math.abs(centroid)) {
				return { rmsAboutCentroidMm: low, centroidMm: centroid, raysTraced: n, raysFailed: NaN, passedShare: NaN, complete: false };
			}
		}
	}
	// Not stopped: the landings summed in the usual order.
	let failed = 0;
	const sums = new Landings();
	for (let q = 0; q < K * J; q++) {
		if (sampleState[q] === 2) failed++;
		else if (sampleState[q] === 1) sums.addAt(sampleX[q], sampleY[q]);
	}
	return { rmsAboutCentroidMm: sums.rmsAboutCentroid(), centroidMm: sums.centroid(), raysTraced: sums.n, raysFailed: failed, passedShare: share(sums.n), complete: true };
}
