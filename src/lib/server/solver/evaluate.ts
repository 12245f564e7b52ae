/**
 * The solver's output stage for one placement: the object-to-target matrix and its check,
 * exact real rays stopped by the real apertures (the aperture stop and the axial cone it passes,
 * the axial spot, the field-edge spot from a pupil grid of skew rays, the fraction of the
 * requested cone lost on axis and at the field edge), the Airy radius, the figures over the
 * colour band (axial colour, band spots), the rays of the drawing, and the tolerance view.
 * Used for the search's best candidates and again, independently, when a setup is saved (the
 * server re-evaluates what it stores).
 */
import {
	create,
	fromPrincipalPlanes,
	layoutMatrix,
	imageAfter,
	pointTransferMatrix,
	createMat3,
	cardinalPoints,
	traceSystemFromLayout,
	axialSpot,
	axialCone,
	stopChiefSine,
	fieldGridSpot,
	edgePupil,
	pupilSpot,
	combinedRmsMm,
	defaultColourBand,
	reverseElement,
	apertureReport,
	airyRadiusMm,
	workingFNumber,
	imageSideNA,
	traceRay,
	startRay,
	heightAtPlane,
	chiefSine,
	sagMm,
	RAY_STRIDE,
	TRACE_OK,
	TRACE_CLIPPED,
	TRACE_TIR,
	firstVertexPositionsMm,
	type ColourBand,
	type PupilEllipse,
	type Layout,
	type ThickElement,
	type TraceSystem
} from '../../optics';
import type { ColourFigures, RayPath, Solution, SolutionElement, ToleranceRow } from '../../solver/types';
import { orientationText } from '../../solver/orientation';
import { EDGE_BLOCKED_RATIO, VIGNETTING_TOLERANCE } from '../../solver/ranking';
import { clearApertureOf, partElement, type CandidatePart } from './elements';

/** Tolerance of the independent matrix check of a returned solution (|B| in mm, |A − m| relative). */
export const VERIFY_B_TOL_MM = 1e-6;
export const VERIFY_A_TOL = 1e-6;

/** Rays (rings) of the axial spot of the final trace. */
const FAN_RAYS = 32;
/** Rings and spokes (over the half plane, mirrored) of the field edge's sample of its passed cone: 96 rays standing for 192. */
const EDGE_RINGS = 12;
const EDGE_SPOKES = 8;
/** Cells across the square grid used when the field edge's passed rays do not surround a passing centre. */
const EDGE_GRID = 16;

/** A placement to evaluate: which elements (already oriented) and where. */
export interface PlacementChoice {
	parts: CandidatePart[];
	elements: ThickElement[];
	objectDistanceMm: number;
	gapsMm: number[];
	backDistanceMm: number;
	/** Magnification asked for (pairs hit it exactly; single parts within tolerance). */
	targetMagnification: number;
	afocalFamily: boolean;
	doubleRoot: boolean;
	screenEstimateMm: number;
}

/** Context of the question the evaluation needs. */
export interface EvalQuestion {
	wavelengthNm: number;
	trackMm: number;
	objectNA: number;
	objectHeightMm: number;
	/** Band of the colour figures (default: `defaultColourBand` of the working wavelength). */
	band?: ColourBand;
}

/** Evaluated placement with the figures the ranking needs. */
export interface Evaluated {
	solution: Omit<Solution, 'rank'>;
	/** Verified by the full matrix (B ≈ 0, A ≈ target within tolerance for pairs). */
	verified: boolean;
}

function eflSource(part: CandidatePart): SolutionElement['eflSource'] {
	if (part.measured) return 'measured';
	return part.surfaces.length >= 2 ? 'prescription' : 'datasheet';
}

function relUncertainty(part: CandidatePart): { rel: number; basis: ToleranceRow['basis'] } {
	if (part.measured && part.measured.uncertaintyMm !== null && part.measured.uncertaintyMm > 0) {
		return { rel: part.measured.uncertaintyMm / Math.abs(part.measured.eflMm), basis: 'measurement uncertainty' };
	}
	return { rel: 0.01, basis: 'nominal ±1 %' };
}

/** Polyline of a real ray through the system, points (z, y) from the object plane to the target. */
function rayPolyline(sys: TraceSystem, yObj: number, sinAngle: number): [number, number][] | null {
	const ray = new Float64Array(RAY_STRIDE);
	const heights = new Float64Array(sys.count);
	if (!startRay(ray, yObj, sinAngle)) return null;
	const status = traceRay(sys, ray, heights);
	// A ray stopped at an aperture (or by total internal reflection) ends where it met that surface;
	// one that missed a surface or would have met it behind its last point ends at its last surface.
	const upTo = status === TRACE_OK ? sys.count : status === TRACE_CLIPPED || status === TRACE_TIR ? ray[5] + 1 : ray[5];
	const pts: [number, number][] = [[0, yObj]];
	for (let k = 0; k < upTo; k++) {
		const sag = sagMm(sys.curvaturePerMm[k], heights[k]) ?? 0;
		pts.push([sys.zMm[k] + sag, heights[k]]);
	}
	if (status !== TRACE_OK) return pts;
	const yEnd = heightAtPlane(ray, sys.imageZMm);
	if (yEnd !== null) pts.push([sys.imageZMm, yEnd]);
	return pts;
}

/**
 * The paraxial construction of the whole system: parallel ray, focal ray, both via H and H'.
 * Drawn only when it runs forwards (object plane ≤ H ≤ H' ≤ target plane): with crossed or
 * distant principal planes the construction would run backwards, and no drawn path may.
 */
function principalRays(layout: Layout, systemLens: Float64Array, imageY: number, h: number, trackMm: number): RayPath[] {
	const cp = cardinalPoints(systemLens);
	if (!cp || h === 0) return [];
	const z1 = layout.objectDistanceMm; // first vertex
	const zLast = trackMm - layout.backDistanceMm; // last vertex
	const zH = z1 + cp.frontPrincipalMm,
		zH2 = zLast + cp.backPrincipalMm;
	if (!(0 <= zH && zH <= zH2 && zH2 <= trackMm)) return [];
	const zF = z1 - cp.fflMm;
	// Parallel ray: (0, h) → H at h → H' at h → image point.
	const parallel: RayPath = {
		kind: 'principal',
		points: [
			[0, h],
			[zH, h],
			[zH2, h],
			[trackMm, imageY]
		]
	};
	// Focal ray: (0, h) through F → H at height yF → parallel from H' to the image.
	const slope = zF !== 0 ? -h / zF : 0;
	const yAtH = h + slope * zH;
	const focal: RayPath = {
		kind: 'principal',
		points: [
			[0, h],
			[zH, yAtH],
			[zH2, yAtH],
			[trackMm, yAtH]
		]
	};
	return [parallel, focal];
}

function matrixBetween(elements: ThickElement[], gapsMm: number[]): Float64Array {
	const m = create();
	layoutMatrix(m, { objectDistanceMm: 0, elements, gapsMm, backDistanceMm: 0 });
	return m;
}

/** Image shift and magnification when element k's EFL is scaled by (1 + dev). */
function perturbed(choice: PlacementChoice, k: number, dev: number): { shiftMm: number; magnification: number } | null {
	const el = choice.elements[k];
	const cp = cardinalPoints(el.matrix);
	if (!cp) return null;
	const scaledEl: ThickElement = {
		...el,
		matrix: fromPrincipalPlanes(create(), cp.powerPerMm / (1 + dev), cp.frontPrincipalMm, cp.backPrincipalMm)
	};
	const elements = choice.elements.map((e, q) => (q === k ? scaledEl : e));
	const m = create();
	layoutMatrix(m, { objectDistanceMm: choice.objectDistanceMm, elements, gapsMm: choice.gapsMm, backDistanceMm: 0 });
	const img = imageAfter(m);
	if (!img) return null;
	return { shiftMm: img.imageDistanceMm - choice.backDistanceMm, magnification: img.magnification };
}

/** The aperture stop as (part index, surface 1-based within the part). */
function stopOf(sys: TraceSystem, k: number): { partIndex: number; surface: number } {
	const e = sys.elementIndex[k];
	let first = k;
	while (first > 0 && sys.elementIndex[first - 1] === e) first--;
	return { partIndex: e, surface: k - first + 1 };
}

/** The field edge traced: its spot, the fraction of the requested cone lost, and how it was sampled. */
interface EdgeTrace {
	rmsMm: number | null;
	/** Centroid height of the edge spot, mm (NaN when no ray arrives). */
	centroidMm: number;
	lostFraction: number;
	sinChief: number;
	/** The passed part of the cone, sampled by `pupilSpot` (null: nothing passes, or the fallback grid was used). */
	pupil: PupilEllipse | null;
}

/**
 * The field edge around its real chief ray (through the centre of the aperture stop): the passed
 * part of the requested cone (`edgePupil`) sampled by `pupilSpot`; when the passed rays do not
 * surround a passing centre, a square grid over the whole requested cone (`fieldGridSpot`);
 * when nothing passes, the field edge is blocked (all of its cone lost, no spot).
 */
function edgeTrace(sys: TraceSystem, h: number, na: number, stopSurface: number): EdgeTrace {
	const sinChief = stopChiefSine(sys, h, stopSurface);
	const pupil = edgePupil(sys, h, sinChief, na);
	if (pupil) {
		const spot = pupilSpot(sys, h, pupil, { rings: EDGE_RINGS, spokes: EDGE_SPOKES });
		if (spot.raysTraced > 0) return { rmsMm: spot.rmsAboutCentroidMm, centroidMm: spot.centroidMm, lostFraction: 1 - spot.passedShare, sinChief, pupil };
	}
	const grid = fieldGridSpot(sys, h, { sinChief, radiusSine: na, grid: EDGE_GRID });
	return { rmsMm: grid.raysTraced > 0 ? grid.rmsAboutCentroidMm : null, centroidMm: grid.centroidMm, lostFraction: 1 - grid.passedFraction, sinChief, pupil: null };
}

/** The field edge's spot at another wavelength, sampled as `edgeTrace` sampled it. */
function edgeSpotAt(sys: TraceSystem, h: number, na: number, e: EdgeTrace): { rmsAboutCentroidMm: number; centroidMm: number } | null {
	if (e.pupil) {
		const spot = pupilSpot(sys, h, e.pupil, { rings: EDGE_RINGS, spokes: EDGE_SPOKES });
		return spot.raysTraced > 0 ? spot : null;
	}
	const grid = fieldGridSpot(sys, h, { sinChief: e.sinChief, radiusSine: na, grid: EDGE_GRID });
	return grid.raysTraced > 0 ? grid : null;
}

/**
 * For the drawing: the largest offset δ ≤ na (direction sines) on one side of the chief ray whose
 * meridional ray still passes every aperture, by bisection; null when the chief ray itself is lost.
 */
function rimOffset(sys: TraceSystem, h: number, sinChief: number, sign: number, na: number): number | null {
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
function colourFigures(
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

/** What `evaluatePlacement` computes beyond the figures that rank (both by default). */
export interface EvalOptions {
	/** The figures over the colour band (`solution.colour`); without it `colour` is left out. */
	colour?: boolean;
	/** The drawing's rays (`solution.rays`); without it `rays` is empty. */
	drawing?: boolean;
}

/**
 * Evaluates a placement (see the module comment). The search evaluates its candidates without the
 * drawing (and without the colour band unless it ranks by it), then evaluates the answers it returns
 * again in full: the figures that rank are the same either way.
 */
export function evaluatePlacement(choice: PlacementChoice, q: EvalQuestion, symmetricParts: boolean[], options: EvalOptions = {}): Evaluated {
	const drawing = options.drawing ?? true;
	const layout: Layout = {
		objectDistanceMm: choice.objectDistanceMm,
		elements: choice.elements,
		gapsMm: choice.gapsMm,
		backDistanceMm: choice.backDistanceMm
	};
	const full = create();
	layoutMatrix(full, layout);
	const mag = full[0];
	const verified =
		Math.abs(full[1]) <= VERIFY_B_TOL_MM &&
		(choice.elements.length === 1 || Math.abs(mag - choice.targetMagnification) <= VERIFY_A_TOL * Math.max(1, Math.abs(mag)));
	const ptm = pointTransferMatrix(createMat3(), full, 0, q.trackMm);
	const vertices = firstVertexPositionsMm(layout);
	const lens = matrixBetween(choice.elements, choice.gapsMm);

	const diameters = choice.parts.map((p) => p.diameterMm);
	const traced = traceSystemFromLayout(layout, diameters);
	const hEdge = q.objectHeightMm;
	let axialRms: number | null = null,
		edgeRms: number | null = null,
		untracedReason: string | null = null;
	let axialLost: number | null = null,
		edgeLost: number | null = null,
		tracedNA: number | null = null,
		stop: { partIndex: number; surface: number } | null = null,
		grid: EdgeTrace | null = null,
		worstFill = 0;
	const rays: RayPath[] = [];
	if (traced.ok) {
		const sys = traced.value;
		const cone = axialCone(sys, q.objectNA);
		tracedNA = cone.passedSine;
		axialLost = cone.lostFraction;
		stop = cone.stopSurface >= 0 ? stopOf(sys, cone.stopSurface) : null;
		const axial = cone.passedSine > 0 ? axialSpot(sys, { na: cone.passedSine, rays: FAN_RAYS }) : null;
		axialRms = axial ? axial.rmsAboutCentroidMm : null;
		if (hEdge > 0) {
			grid = edgeTrace(sys, hEdge, q.objectNA, cone.stopSurface);
			edgeRms = grid.rmsMm;
			edgeLost = grid.lostFraction;
		} else {
			edgeRms = axialRms;
			edgeLost = 0;
		}
		const rep = apertureReport(sys, hEdge, { na: q.objectNA });
		for (const sf of rep.surfaces) {
			if (!Number.isFinite(sf.semiApertureMm)) continue;
			for (const v of [sf.marginalMm, hEdge > 0 ? sf.chiefMm : null, hEdge > 0 ? sf.edgeRimMm : null]) {
				if (v !== null && Number.isFinite(v)) worstFill = Math.max(worstFill, v / sf.semiApertureMm);
			}
		}
		if (axialRms === null) untracedReason = 'No real ray of the axial cone reaches the target plane.';
		for (const sgn of drawing ? [1, -1] : []) {
			const pts = rayPolyline(sys, 0, sgn * cone.passedSine);
			if (pts) rays.push({ kind: 'marginal', points: pts });
		}
		if (drawing && hEdge > 0 && grid) {
			const sc = grid.sinChief;
			const chief = rayPolyline(sys, hEdge, sc);
			if (chief) rays.push({ kind: 'chief', points: chief });
			for (const sgn of [1, -1]) {
				const off = rimOffset(sys, hEdge, sc, sgn, q.objectNA);
				const pts = off === null ? null : rayPolyline(sys, hEdge, sc + sgn * off);
				if (pts) rays.push({ kind: 'edge-rim', points: pts });
			}
		}
	} else {
		untracedReason = 'A part without a prescription (black box) cannot be traced with real rays; the answer is paraxial only.';
	}
	const airy = airyRadiusMm(q.wavelengthNm, workingFNumber(imageSideNA(tracedNA ?? q.objectNA, mag)));
	const vigAxial = axialLost !== null && axialLost > VIGNETTING_TOLERANCE;
	const vigEdge = hEdge > 0 && edgeLost !== null && edgeLost > VIGNETTING_TOLERANCE;
	const blocked = hEdge > 0 && edgeLost !== null && axialLost !== null && 1 - edgeLost < EDGE_BLOCKED_RATIO * (1 - axialLost);
	const colour = options.colour ?? true ? colourFigures(choice, q, layout, diameters, mag, traced.ok ? { tracedNA, grid, axialRms } : null) : undefined;
	const h = hEdge > 0 ? hEdge : Math.max(1, 0.2 * Math.min(...choice.parts.map((p) => clearApertureOf(p) / 2)));
	if (drawing) rays.push(...principalRays(layout, lens, mag * h, h, q.trackMm));

	const used = new Map<number, number>();
	const elements: SolutionElement[] = choice.elements.map((el, k) => {
		const part = choice.parts[k];
		const n = (used.get(part.partId) ?? 0) + 1;
		used.set(part.partId, n);
		const cp = cardinalPoints(el.matrix);
		const lastVertex = vertices[k] + el.thicknessMm;
		return {
			partId: part.partId,
			sku: part.sku,
			name: part.name,
			kind: part.kind,
			reversed: el.reversed,
			symmetric: symmetricParts[k],
			orientation: orientationText({ reversed: el.reversed, symmetric: symmetricParts[k], surfaces: el.surfaces }),
			firstVertexMm: vertices[k],
			thicknessMm: el.thicknessMm,
			eflMm: cp ? cp.eflMm : Infinity,
			eflSource: eflSource(part),
			eflRelativeUncertainty: relUncertainty(part).rel,
			toBuy: part.available < n,
			available: part.available,
			locations: part.locations,
			clearApertureMm: clearApertureOf(part),
			diameterMm: part.diameterMm,
			surfaces: el.surfaces ? el.surfaces.map((s) => ({ radiusMm: s.radiusMm, vertexMm: s.vertexMm })) : null,
			frontPrincipalZMm: cp ? vertices[k] + cp.frontPrincipalMm : null,
			backPrincipalZMm: cp ? lastVertex + cp.backPrincipalMm : null
		};
	});

	const tolerance: ToleranceRow[] = choice.elements.map((_, k) => {
		const { rel, basis } = relUncertainty(choice.parts[k]);
		const plus = perturbed(choice, k, rel),
			minus = perturbed(choice, k, -rel);
		return {
			partIndex: k,
			sku: choice.parts[k].sku,
			relativeDeviation: rel,
			basis,
			imageShiftMm: [plus?.shiftMm ?? null, minus?.shiftMm ?? null],
			magnification: [plus?.magnification ?? null, minus?.magnification ?? null]
		};
	});

	const ratio = axialRms === null ? null : Math.max(axialRms, edgeRms ?? axialRms) / airy;
	return {
		verified,
		solution: {
			elements,
			objectDistanceMm: choice.objectDistanceMm,
			gapsMm: choice.gapsMm,
			backDistanceMm: choice.backDistanceMm,
			trackMm: q.trackMm,
			magnification: mag,
			systemMatrix: { A: full[0], B: full[1], C: full[2], D: full[3] },
			pointTransferMatrix: Array.from(ptm),
			afocalFamily: choice.afocalFamily,
			doubleRoot: choice.doubleRoot,
			spot: {
				axialRmsMm: axialRms,
				edgeRmsMm: edgeRms,
				airyRadiusMm: airy,
				ratioToAiry: ratio,
				statistic: 'rms-radius-about-centroid',
				untracedReason,
				screenEstimateMm: choice.screenEstimateMm
			},
			vignetting: {
				axial: vigAxial,
				edge: vigEdge,
				worstFill,
				axialLostFraction: axialLost,
				edgeLostFraction: edgeLost,
				edgeBlocked: blocked,
				tracedNA,
				stop
			},
			colour,
			rays,
			tolerance
		}
	};
}

/** The ranking lives beside the types so that /build can explain it with the same code. */
export { rankKey, compareKeys } from '../../solver/ranking';
