/**
 * A lower bound of an imaging answer's ranking key (`rankKey` in solver/ranking.ts), in three tiers
 * of cost, so that the search can bound every physical root it finds: the solver then traces the
 * roots best bound first until no root left can beat the N-th answer (branch and bound, solve.ts).
 * Safe by construction, component by component:
 *
 * - coating class, working-distance step and part count: exact (they follow from the parts and
 *   the placement the root already gives);
 * - BOUND_CHEAP: the rim ray, then the rays of the axial fan from the outside in until the bound
 *   exceeds the bar it is given. The evaluation ranks by max(axial RMS, edge RMS) / Airy, and the
 *   axial RMS is the RMS of the FAN_RAYS fan heights that reach the target (`axialSpot`, pupil radii
 *   √((k − ½)/K)): the sum over some of them divided by FAN_RAYS is at most its square; the whole
 *   fan gives it exactly. When the rim is cut, the first steps of `axialCone`'s own bisection show whether the
 *   cone it will find loses more than the tolerance (vignetting class 2 or 3), else the bound is 0;
 * - BOUND_AXIAL: the axial figures exactly (the same `axialCone` and `axialSpot` calls);
 * - BOUND_FULL: with the field edge's `edgeTrace` too: the monochromatic key itself but for the
 *   rounding of the Airy radius (the root's magnification instead of the matrix's, equal to about
 *   1e-12; the bound is lowered by 1e-9 of the ratio, and `boundUpper` raised by as much). Given
 *   a bar, it stops early when the axis's exact parts already put the key above it, and the
 *   field edge's spot stops as soon as it is surely large enough to (`pupilSpot`'s `stopAboveMm`:
 *   the squared spread of the rays landed so far over all the samples is a lower bound).
 *
 * The rays run through a trace system built as the evaluation builds it (traceSystemFromLayout:
 * the same numbers, the same sums in the same order), so they are the same rays. Ranked by the
 * colour band, the spot part of the bound is 0 (the band's spots are other rays).
 *
 * Pure and allocation-free in the cheap tier (scratch buffers per module; one search per thread at a time).
 */
import { axialCone, axialSpot, bisectCone, fanSine, airyRadiusMm, workingFNumber, imageSideNA, CONE_TOP, CONE_STEPS } from '../../optics/spot';
import { startRay, traceRay, traceRayPair, heightAtPlane, RAY_STRIDE, TRACE_OK, type TraceSystem } from '../../optics/raytrace';
import { ELEMENT_STRIDE, EL_THICKNESS } from '../../optics/snapshot';
import type { ThickElement } from '../../optics/element';
import { packRankParts as pack, spotBand, spotBandLimit, EDGE_BLOCKED_RATIO, VIGNETTING_TOLERANCE, WORKING_DISTANCE_STEP_MM } from '../ranking';
import { FAN_RAYS, edgeTrace } from './field-edge';

/** Numbers per surface in the ray table: vertex offset in the element, curvature, index after, semi-aperture. */
const SURFACE_NUMBERS = 4;

/** Per element: its surfaces as the trace system needs them (see `rayTable`). */
export interface RayTable {
	/** Numbers per element: 1 + SURFACE_NUMBERS · maxSurfaces. */
	stride: number;
	/** Per element: [surface count, then per surface: vertexMm, curvature, indexAfter, semiApertureMm]. */
	data: Float64Array;
}

/**
 * The ray table of oriented elements: for each, the numbers `traceSystemFromLayout` puts in the
 * trace system (curvature 1/R, 0 for flat; the semi-aperture as the smaller of half the clear
 * aperture and half the part's outer diameter). Black boxes have 0 surfaces.
 */
export function rayTable(elements: readonly ThickElement[], outerDiametersMm: readonly (number | null)[]): RayTable {
	const maxSurfaces = Math.max(1, ...elements.map((e) => e.surfaces?.length ?? 0));
	const stride = 1 + SURFACE_NUMBERS * maxSurfaces;
	const data = new Float64Array(elements.length * stride);
	elements.forEach((e, k) => {
		const o = k * stride;
		const surfaces = e.surfaces ?? [];
		data[o] = surfaces.length;
		const outer = outerDiametersMm[k] ?? null;
		const semi = Math.min(e.clearApertureMm === null ? Infinity : e.clearApertureMm / 2, outer === null ? Infinity : outer / 2);
		surfaces.forEach((s, q) => {
			const p = o + 1 + q * SURFACE_NUMBERS;
			data[p] = s.vertexMm;
			data[p + 1] = s.radiusMm === null ? 0 : 1 / s.radiusMm;
			data[p + 2] = s.indexAfter;
			data[p + 3] = semi;
		});
	});
	return { stride, data };
}

/** What the bound reads of the question. */
export interface BoundQuestion {
	objectNA: number;
	/** Field edge height, mm (0: axis only). */
	objectHeightMm: number;
	wavelengthNm: number;
	/** Ranked by the colour band: no spot bound. */
	byBand: boolean;
}

/** A trace system whose arrays are refilled for each placement. */
interface ScratchSystem {
	count: number;
	zMm: Float64Array;
	curvaturePerMm: Float64Array;
	indexAfter: Float64Array;
	semiApertureMm: Float64Array;
	elementIndex: Int32Array;
	imageZMm: number;
}

let scratch: ScratchSystem = newScratch(8);
const ray = new Float64Array(RAY_STRIDE);
/** The fan's outermost ray, traced with the rim ray (`traceRayPair`). */
const fanRay = new Float64Array(RAY_STRIDE);
/**
 * The Airy radius uses the matrix's magnification in the evaluation and the root's here (equal
 * to about 1e-12): the spot bound is lowered by this much so that it stays below.
 */
const AIRY_LOW = 1 - 1e-9;
const AIRY_HIGH = 1 + 1e-9;

function newScratch(n: number): ScratchSystem {
	return {
		count: 0,
		zMm: new Float64Array(n),
		curvaturePerMm: new Float64Array(n),
		indexAfter: new Float64Array(n),
		semiApertureMm: new Float64Array(n),
		elementIndex: new Int32Array(n),
		imageZMm: 0
	};
}

/** Writes element e's surfaces with its first vertex at z = vertex into the scratch system from surface k on; returns the next k. */
function place(table: RayTable, e: number, element: number, vertex: number, k: number): number {
	const o = e * table.stride;
	const n = table.data[o];
	for (let q = 0; q < n; q++) {
		const p = o + 1 + q * SURFACE_NUMBERS;
		scratch.zMm[k] = vertex + table.data[p];
		scratch.curvaturePerMm[k] = table.data[p + 1];
		scratch.indexAfter[k] = table.data[p + 2];
		scratch.semiApertureMm[k] = table.data[p + 3];
		scratch.elementIndex[k] = element;
		k++;
	}
	return k;
}

/**
 * The trace system of element i at object distance s (then a gap g and element j; j < 0: i
 * alone) and back distance d, with the same arithmetic as `traceSystemFromLayout`.
 */
function buildSystem(table: RayTable, packed: Float64Array, i: number, j: number, s: number, g: number, d: number): TraceSystem {
	const need = table.data[i * table.stride] + (j >= 0 ? table.data[j * table.stride] : 0);
	if (need > scratch.zMm.length) scratch = newScratch(need);
	const ti = packed[i * ELEMENT_STRIDE + EL_THICKNESS];
	let k = place(table, i, 0, s, 0);
	let image = s + d + ti;
	if (j >= 0) {
		const tj = packed[j * ELEMENT_STRIDE + EL_THICKNESS];
		k = place(table, j, 1, s + ti + g, k);
		image = image + tj + g;
	}
	scratch.count = k;
	scratch.imageZMm = image;
	return scratch;
}

/** True when the axial ray at direction sine u passes every aperture (as axialCone tests it). */
function passes(sys: TraceSystem, u: number): boolean {
	return startRay(ray, 0, u) && traceRay(sys, ray) === TRACE_OK;
}

/**
 * The bound of a root whose rim ray is cut: the first steps of `axialCone`'s own bisection
 * (`bisectCone` from [0, the sine asked for]: the same rays) until its upper end shows a loss
 * beyond the tolerance (vignetting class 2 at least) or it has run as many steps as axialCone does;
 * else nothing beyond the exact parts of the key.
 */
function coneCutBound(sys: TraceSystem, na: number, coat: number, wdStep: number, count: number): number {
	const keep = (1 - VIGNETTING_TOLERANCE) * (1 - 1e-12);
	const whole = bisectCone(sys, 0, Math.min(na, CONE_TOP), CONE_STEPS, -1, na, keep);
	return pack(whole ? 0 : 2, coat, 0, wdStep, count, 0);
}

/** How much of the answer's figures the bound traces (each tier costs more and bounds tighter). */
export const BOUND_CHEAP = 0;
/** The axial figures exactly (`axialCone`, the whole fan). */
export const BOUND_AXIAL = 1;
/** The axial figures and the field edge (`edgeTrace`) exactly: the key itself, but for rounding. */
export const BOUND_FULL = 2;

/**
 * After `rankBound` with BOUND_FULL (monochromatic ranking only): an upper bound of the key, for
 * a root that is an answer (the search counts it towards its own N-th key). Else Infinity.
 */
export const boundUpper = new Float64Array(1);
/**
 * After `rankBound` with BOUND_CHEAP: the axial RMS (mm) when it traced the whole fan with the rim
 * passing (−1: every fan ray lost), else NaN. Pass it to the BOUND_FULL call of the same root as
 * `fanRms` (those rays are not traced again).
 */
export const boundFan = new Float64Array(1);

/**
 * The packed lower bound (`packRankParts`) of the ranking key of the answer a root gives: element
 * i at object distance s (then gap g and element j; j < 0 for a single), back distance d,
 * magnification m; `untraceable` when an element is a black box, `coat` 1 when a part is used
 * outside its coating band; `tier` how much to trace (BOUND_*). Both tiers stop tracing as
 * soon as the bound exceeds `bar` (the bound returned is then above it, but not the tightest);
 * when it traced the whole fan it says so in `boundFan`, and on axis only (no field edge) its
 * bound is the key itself (`boundUpper` set).
 */
export function rankBound(
	table: RayTable,
	packed: Float64Array,
	q: BoundQuestion,
	i: number,
	j: number,
	s: number,
	g: number,
	d: number,
	m: number,
	untraceable: boolean,
	coat: number,
	tier: number,
	bar = Infinity,
	fanRms = -1
): number {
	boundUpper[0] = Infinity;
	boundFan[0] = NaN;
	const wdStep = -Math.floor(Math.min(s, d) / WORKING_DISTANCE_STEP_MM);
	const count = j < 0 ? 1 : 2;
	// A black box is not traced: its answer's key is known (no vignetting figures, untraced spot).
	if (untraceable) return pack(0, coat, spotBand(null), wdStep, count, 1e9);
	const sys = buildSystem(table, packed, i, j, s, g, d);
	return tier === BOUND_CHEAP ? cheapBound(sys, q, m, coat, wdStep, count, bar) : tracedBound(sys, q, m, coat, wdStep, count, tier === BOUND_FULL, bar, fanRms);
}

/**
 * BOUND_CHEAP (see `rankBound`): the rim ray, then the axial fan from the outside in until the
 * bound exceeds `bar`. The exact parts of the key (coat, wdStep, count) come in as numbers: no
 * object per root on the hot path.
 */
function cheapBound(sys: TraceSystem, q: BoundQuestion, m: number, coat: number, wdStep: number, count: number, bar: number): number {
	const na = q.objectNA;
	// The rim ray and the fan's outermost ray, traced together (the same rays as one by one).
	const rim = Math.min(na, CONE_TOP);
	const outer = startRay(ray, 0, rim) && startRay(fanRay, 0, fanSine(FAN_RAYS, FAN_RAYS, na));
	if (outer) traceRayPair(sys, ray, fanRay);
	// As axialCone finds it: when the rim ray passes, the whole cone counts.
	if (!(outer ? ray[4] === TRACE_OK : passes(sys, rim))) return coneCutBound(sys, na, coat, wdStep, count);
	if (q.byBand) return pack(0, coat, 0, wdStep, count, 0);
	// The fan from the outside in (spherical aberration grows outwards), stopping as soon as the
	// rays so far put the bound above `bar`; the whole fan gives the axial RMS itself.
	const airy = airyAt(q, na, m);
	let sum = 0,
		landed = 0,
		low = 0;
	// The fan ray whose trace waits in `fanRay` (0: none): rays go two at a time, k and k − 1.
	let waiting = outer ? FAN_RAYS : 0;
	for (let k = FAN_RAYS; k >= 1; k--) {
		let traced: Float64Array = ray;
		if (waiting === k) {
			traced = fanRay;
			waiting = 0;
		} else if (k > 1 && startRay(ray, 0, fanSine(k, FAN_RAYS, na)) && startRay(fanRay, 0, fanSine(k - 1, FAN_RAYS, na))) {
			traceRayPair(sys, ray, fanRay);
			waiting = k - 1;
		} else if (!passes(sys, fanSine(k, FAN_RAYS, na))) continue;
		if (traced[4] !== TRACE_OK) continue;
		const y = heightAtPlane(traced, sys.imageZMm);
		if (y === null) continue;
		sum += y * y;
		landed++;
		const ratio = (Math.sqrt(sum / FAN_RAYS) / airy) * AIRY_LOW;
		low = pack(0, coat, spotBand(ratio), wdStep, count, ratio);
		if (low > bar) return low;
	}
	// The whole fan with the rim passing: the axial RMS itself (axialSpot's sum, added in another order).
	boundFan[0] = landed === 0 ? -1 : Math.sqrt(sum / landed);
	if (landed === 0) return pack(0, coat, spotBand(null), wdStep, count, 1e9);
	const ratio = Math.sqrt(sum / landed) / airy;
	// On axis only (no field edge), nothing else ranks: the key itself.
	if (q.objectHeightMm === 0) boundUpper[0] = pack(0, coat, spotBand(ratio * AIRY_HIGH), wdStep, count, ratio * AIRY_HIGH);
	return pack(0, coat, spotBand(ratio * AIRY_LOW), wdStep, count, ratio * AIRY_LOW);
}

/** BOUND_AXIAL or BOUND_FULL (`full`, see `rankBound`): the evaluation's own axial figures, and the field edge's. */
function tracedBound(sys: TraceSystem, q: BoundQuestion, m: number, coat: number, wdStep: number, count: number, full: boolean, bar: number, fanRms: number): number {
	const na = q.objectNA;
	// As realRayFigures and evaluatePlacement (evaluate.ts) compute them.
	const cone = axialCone(sys, na);
	const passed = cone.passedSine,
		axialLost = cone.lostFraction;
	// The cheap tier's whole fan, when it traced one for this root with the whole cone passing (the same rays).
	const known = fanRms >= 0 && passed === na ? fanRms : NaN;
	const axial = known === known || !(passed > 0) ? null : axialSpot(sys, { na: passed, rays: FAN_RAYS });
	const axialRms = known === known ? known : axial ? axial.rmsAboutCentroidMm : null;
	const h = q.objectHeightMm;
	let cls = axialLost > VIGNETTING_TOLERANCE ? 2 : 0;
	if (axialRms === null) {
		const edgeOnly = full && h > 0 ? edgeTrace(sys, h, na, cone.stopSurface) : null;
		if (edgeOnly) cls = edgeClass(cls, h, axialLost, edgeOnly.lostFraction);
		if (full) boundUpper[0] = pack(cls, coat, spotBand(null), wdStep, count, 1e9);
		return pack(cls, coat, spotBand(null), wdStep, count, 1e9);
	}
	const airy = airyAt(q, passed, m);
	// The field edge's spot may stop as soon as it puts the key above the bar (the edge's class,
	// 1 or 3, is then not known: the bound keeps the axis's).
	if (full && pack(cls, coat, 0, wdStep, count, 0) > bar) return pack(cls, coat, 0, wdStep, count, 0);
	const stopAbove = full && h > 0 && !q.byBand ? edgeStop(bar, cls, coat, wdStep, count, airy) : Infinity;
	const edge = full && h > 0 ? edgeTrace(sys, h, na, cone.stopSurface, stopAbove === Infinity ? undefined : stopAbove) : null;
	if (edge && !edge.complete) {
		const low = (Math.max(axialRms, edge.rmsMm ?? 0) / airy) * AIRY_LOW;
		return pack(cls, coat, spotBand(low), wdStep, count, low);
	}
	const edgeRms = edge ? edge.rmsMm : axialRms;
	if (full) cls = edgeClass(cls, h, axialLost, edge ? edge.lostFraction : 0);
	if (q.byBand) return pack(cls, coat, 0, wdStep, count, 0);
	const ratio = Math.max(axialRms, edgeRms ?? axialRms) / airy;
	if (full) boundUpper[0] = pack(cls, coat, spotBand(ratio * AIRY_HIGH), wdStep, count, ratio * AIRY_HIGH);
	return pack(cls, coat, spotBand(ratio * AIRY_LOW), wdStep, count, ratio * AIRY_LOW);
}

/** The vignetting class (ranking.ts) from the axis's class and the losses of axis and field edge. */
function edgeClass(axialCls: number, h: number, axialLost: number, edgeLost: number): number {
	const blocked = h > 0 && 1 - edgeLost < EDGE_BLOCKED_RATIO * (1 - axialLost);
	return blocked ? 3 : axialCls === 2 ? 2 : h > 0 && edgeLost > VIGNETTING_TOLERANCE ? 1 : 0;
}

/**
 * The RMS radius (mm) above which the field edge's spot puts the key above `bar`, whatever the
 * rest: the upper edge of the last spot band whose key (with the exact parts) is still within
 * the bar; Infinity when every band is.
 */
function edgeStop(bar: number, cls: number, coat: number, wdStep: number, count: number, airy: number): number {
	for (let band = 0; band < 127; band++) {
		if (pack(cls, coat, band, wdStep, count, 0) > bar) return band === 0 ? 0 : (spotBandLimit(band - 1) * airy) / AIRY_LOW;
	}
	return Infinity;
}

/** The Airy radius at the target for the cone `sine` and magnification m (as the evaluation computes it). */
function airyAt(q: BoundQuestion, sine: number, m: number): number {
	return airyRadiusMm(q.wavelengthNm, workingFNumber(imageSideNA(sine, m)));
}

/**
 * Per element, the object distance beyond which the element, placed first, surely cuts the axial
 * cone of sine `na` by more than VIGNETTING_TOLERANCE at its first surface (Infinity for a black
 * box, or when no distance does): the search then knows such a root's vignetting class (2 at
 * least) without a ray, and the bounding pass does not visit its partners at all.
 *
 * Why it is safe: the ray from the axial object point at sine u0 = na·√(1 − 1.0001·tolerance)
 * meets a sphere (or plane) whose vertex lies at distance s at a height that grows with s and
 * with u. So when that ray is stopped at the first surface at distance s₀, every ray at u ≥ u0 is
 * stopped there at every s ≥ s₀: `axialCone` then finds no sine ≥ u0 that passes, and the cone it
 * passes loses more than the tolerance. The distance is found by bisection with the trace itself
 * and set 1e-6 beyond it, far above rounding.
 */
export function firstSurfaceCuts(table: RayTable, elements: Int32Array, na: number, out: Float64Array): void {
	const u0 = na * Math.sqrt(1 - 1.0001 * VIGNETTING_TOLERANCE);
	const one = newScratch(1);
	one.count = 1;
	const cut = (e: number, s: number): boolean => {
		const o = e * table.stride;
		one.zMm[0] = s + table.data[o + 1];
		one.curvaturePerMm[0] = table.data[o + 2];
		one.indexAfter[0] = table.data[o + 3];
		one.semiApertureMm[0] = table.data[o + 4];
		one.imageZMm = one.zMm[0] + 1;
		return !(startRay(ray, 0, u0) && traceRay(one, ray) === TRACE_OK);
	};
	for (let k = 0; k < elements.length; k++) {
		const e = elements[k];
		out[e] = Infinity;
		if (table.data[e * table.stride] === 0 || !(u0 > 0) || !(u0 < 1)) continue;
		// A ray stopped even at the smallest distance tried, or passed at the largest, gives no cut.
		let lo = 1e-3,
			hi = 1e7;
		if (cut(e, lo) || !cut(e, hi)) continue;
		for (let it = 0; it < 80 && hi - lo > 1e-9 * hi; it++) {
			const mid = 0.5 * (lo + hi);
			if (cut(e, mid)) hi = mid;
			else lo = mid;
		}
		out[e] = hi * (1 + 1e-6);
	}
}

/** The smallest packed key of vignetting class 2 (every other component at its best). */
export const CLASS_TWO_KEY = pack(2, 0, 0, -Infinity, 0, 0);
