/**
 * The real-ray figures of one placement beyond the axial cone: the aperture stop named by part and
 * surface, the field edge (its chief ray through the stop, the passed part of its cone, its spot and
 * the share of the cone lost), the rim rays of the drawing, and the figures over the colour band.
 * Used by `evaluate.ts`.
 */
import {
	create,
	layoutMatrix,
	imageAfter,
	traceSystemFromLayout,
	axialSpot,
	stopChiefSine,
	fieldGridSpot,
	edgePupil,
	pupilSpot,
	combinedRmsMm,
	defaultColourBand,
	reverseElement,
	airyRadiusMm,
	workingFNumber,
	imageSideNA,
	traceRay,
	startRay,
	RAY_STRIDE,
	TRACE_OK,
	type PupilEllipse,
	type Layout,
	type ThickElement,
	type TraceSystem
} from '../../optics';
import type { ColourFigures } from '../../solver/types';
import { partElement, type CandidatePart } from './elements';
import type { EvalQuestion, PlacementChoice } from './evaluate';
import { FAN_RAYS, edgeSpotAt, type EdgeTrace } from '../../solver/search/field-edge';

export { FAN_RAYS, edgeTrace, type EdgeTrace } from '../../solver/search/field-edge';

/** The aperture stop as (part index, surface 1-based within the part). */
export function stopOf(sys: TraceSystem, k: number): { partIndex: number; surface: number } {
	const e = sys.elementIndex[k];
	let first = k;
	while (first > 0 && sys.elementIndex[first - 1] === e) first--;
	return { partIndex: e, surface: k - first + 1 };
}

/**
 * For the drawing: the largest offset δ ≤ na (direction sines) on one side of the chief ray whose
 * meridional ray still passes every aperture, by bisection; null when the chief ray itself is lost.
 */
export function rimOffset(sys: TraceSystem, h: number, sinChief: number, sign: number, na: number): number | null {
	const ray = new Float64Array(RAY_STRIDE);
	const passes = (d: number) => startRay(ray, h, sinChief + sign * d) && traceRay(sys, ray) === TRACE_OK;
	if (!passes(0)) return null;
	if (passes(na)) return na;
	let lo = 0,
		hi = na;
	for (let i = 0; i < 24; i++) {
		const mid = 0.5 * (lo + hi);
		if (passes(mid)) lo = mid;
		else hi = mid;
	}
	return lo;
}

/** Elements of a part at another wavelength, in the orientation asked for (or why not), cached per part. */
const elementsAt = new WeakMap<CandidatePart, Map<string, ThickElement | string>>();
function elementAt(part: CandidatePart, reversed: boolean, wavelengthNm: number): ThickElement | string {
	let cache = elementsAt.get(part);
	if (!cache) {
		cache = new Map();
		elementsAt.set(part, cache);
	}
	const key = `${wavelengthNm}|${reversed ? 1 : 0}`;
	let e = cache.get(key);
	if (e === undefined) {
		const built = partElement(part, wavelengthNm);
		e = built.ok ? (reversed ? reverseElement(built.element) : built.element) : `${part.sku} has no model at ${wavelengthNm} nm: ${built.reason}`;
		cache.set(key, e);
	}
	return e;
}

/**
 * Figures over the colour band (`q.band`, default `defaultColourBand`), with the parts at the
 * positions found at the working wavelength and the target plane where it is: the axial colour
 * (paraxial image position at the longest minus at the shortest wavelength), and the RMS radius
 * about the common centroid on axis and at the field edge, each band wavelength with equal
 * weight, from the same rays (the axial cone the stop passes; the field edge's grid).
 */
export function colourFigures(
	choice: PlacementChoice,
	q: EvalQuestion,
	layout: Layout,
	diameters: number[],
	mag: number,
	trace: { tracedNA: number | null; grid: EdgeTrace | null; axialRms: number | null } | null
): ColourFigures {
	const band = q.band ?? defaultColourBand(q.wavelengthNm);
	const bandNm: [number, number, number] = [band[0], band[1], band[2]];
	const airy = airyRadiusMm(band[1], workingFNumber(imageSideNA(trace?.tracedNA ?? q.objectNA, mag)));
	const none = (note: string): ColourFigures => ({ bandNm, axialColourMm: null, axialRmsMm: null, edgeRmsMm: null, airyRadiusMm: airy, ratioToAiry: null, note });
	const layouts: Layout[] = [];
	for (const w of band) {
		const els: ThickElement[] = [];
		for (let k = 0; k < choice.parts.length; k++) {
			const e = elementAt(choice.parts[k], choice.elements[k].reversed, w);
			if (typeof e === 'string') return none(e);
			els.push(e);
		}
		layouts.push({ ...layout, elements: els });
	}
	const imageAt = (l: Layout) => imageAfter(layoutMatrix(create(), { ...l, backDistanceMm: 0 }))?.imageDistanceMm ?? null;
	const short = imageAt(layouts[0]),
		long = imageAt(layouts[2]);
	const axialColourMm = short === null || long === null ? null : long - short;
	if (trace === null || trace.tracedNA === null || !(trace.tracedNA > 0)) {
		return { ...none(trace === null ? 'A part without a prescription cannot be traced with real rays.' : 'No real ray reaches the target plane.'), axialColourMm };
	}
	const axial: { rmsAboutCentroidMm: number; centroidMm: number }[] = [];
	const edge: { rmsAboutCentroidMm: number; centroidMm: number }[] = [];
	for (let b = 0; b < layouts.length; b++) {
		if (band[b] === q.wavelengthNm) {
			// The working wavelength itself: its figures are already traced.
			if (trace.axialRms !== null) axial.push({ rmsAboutCentroidMm: trace.axialRms, centroidMm: 0 });
			if (trace.grid && trace.grid.rmsMm !== null) edge.push({ rmsAboutCentroidMm: trace.grid.rmsMm, centroidMm: trace.grid.centroidMm });
			continue;
		}
		const l = layouts[b];
		const sys = traceSystemFromLayout(l, diameters);
		if (!sys.ok) return { ...none(sys.error.message), axialColourMm };
		const a = axialSpot(sys.value, { na: trace.tracedNA, rays: FAN_RAYS });
		if (a) axial.push({ rmsAboutCentroidMm: a.rmsAboutCentroidMm, centroidMm: 0 });
		if (trace.grid) {
			const g = edgeSpotAt(sys.value, q.objectHeightMm, q.objectNA, trace.grid);
			if (g) edge.push(g);
		}
	}
	const axialRmsMm = axial.length === band.length ? combinedRmsMm(axial) : null;
	const edgeRmsMm = trace.grid ? (edge.length === band.length ? combinedRmsMm(edge) : null) : axialRmsMm;
	const ratioToAiry = axialRmsMm === null ? null : Math.max(axialRmsMm, edgeRmsMm ?? axialRmsMm) / airy;
	return { bandNm, axialColourMm, axialRmsMm, edgeRmsMm, airyRadiusMm: airy, ratioToAiry, note: null };
}
