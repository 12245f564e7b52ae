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
	apertureReport,
	airyRadiusMm,
	workingFNumber,
	imageSideNA,
	traceRay,
	startRay,
	heightAtPlane,
	sagMm,
	RAY_STRIDE,
	TRACE_OK,
	TRACE_CLIPPED,
	TRACE_TIR,
	firstVertexPositionsMm,
	type ColourBand,
	type Layout,
	type ThickElement,
	type TraceSystem
} from '../../optics';
import type { RayPath, Solution, SolutionElement, ToleranceRow } from '../../solver/types';
import { orientationText } from '../../solver/orientation';
import { EDGE_BLOCKED_RATIO, VIGNETTING_TOLERANCE } from '../../solver/ranking';
import { clearApertureOf, type CandidatePart } from './elements';
import { FAN_RAYS, colourFigures, edgeTrace, rimOffset, stopOf, type EdgeTrace } from './real-ray-figures';
import { colourBandFor } from '../../optics/colour';

import { VERIFY_A_TOL, VERIFY_B_TOL_MM } from '../../optics/tolerances';

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

/** What `evaluatePlacement` computes beyond the figures that rank (both by default). */
export interface EvalOptions {
	/** The figures over the colour band (`solution.colour`); without it `colour` is left out. */
	colour?: boolean;
	/** The drawing's rays (`solution.rays`), the tolerance view (`solution.tolerance`) and `vignetting.worstFill`; without it they are empty (0). */
	details?: boolean;
}

/**
 * Evaluates a placement (see the module comment). The search evaluates its candidates without the
 * drawing and the tolerance view (and without the colour band unless it ranks by it), then evaluates the answers it returns
 * again in full: the figures that rank are the same either way.
 */
export function evaluatePlacement(choice: PlacementChoice, asked: EvalQuestion, symmetricParts: boolean[], options: EvalOptions = {}): Evaluated {
	// The colour band: the question's, else F–d–C in the visible or the parts' common coating band (colourBandFor).
	const q: EvalQuestion = asked.band ? asked : { ...asked, band: colourBandFor(asked.wavelengthNm, choice.parts.map((p) => p.coatingBandNm)) };
	const drawing = options.details ?? true;
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
	const lens = matrixBetween(choice.elements, choice.gapsMm);

	const diameters = choice.parts.map((p) => p.diameterMm);
	const traced = traceSystemFromLayout(layout, diameters);
	const hEdge = q.objectHeightMm;
	const rr = traced.ok ? realRayFigures(traced.value, q, drawing) : untraceableFigures();
	const { axialRms, edgeRms, axialLost, edgeLost, tracedNA, rays } = rr;
	const airy = airyRadiusMm(q.wavelengthNm, workingFNumber(imageSideNA(tracedNA ?? q.objectNA, mag)));
	const colour = options.colour ?? true ? colourFigures(choice, q, layout, diameters, mag, traced.ok ? { tracedNA, grid: rr.grid, axialRms } : null) : undefined;
	const h = hEdge > 0 ? hEdge : Math.max(1, 0.2 * Math.min(...choice.parts.map((p) => clearApertureOf(p) / 2)));
	if (drawing) rays.push(...principalRays(layout, lens, mag * h, h, q.trackMm));

	const ratio = axialRms === null ? null : Math.max(axialRms, edgeRms ?? axialRms) / airy;
	return {
		verified,
		solution: {
			elements: solutionElements(choice, firstVertexPositionsMm(layout), symmetricParts),
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
				untracedReason: rr.untracedReason,
				screenEstimateMm: choice.screenEstimateMm
			},
			vignetting: {
				axial: axialLost !== null && axialLost > VIGNETTING_TOLERANCE,
				edge: hEdge > 0 && edgeLost !== null && edgeLost > VIGNETTING_TOLERANCE,
				worstFill: rr.worstFill,
				axialLostFraction: axialLost,
				edgeLostFraction: edgeLost,
				edgeBlocked: hEdge > 0 && edgeLost !== null && axialLost !== null && 1 - edgeLost < EDGE_BLOCKED_RATIO * (1 - axialLost),
				tracedNA,
				stop: rr.stop
			},
			colour,
			rays,
			tolerance: drawing ? toleranceRows(choice) : []
		}
	};
}

/** What the real rays tell of a placement (all null for a part that cannot be traced), and the rays drawn so far. */
interface RealRayFigures {
	axialRms: number | null;
	edgeRms: number | null;
	untracedReason: string | null;
	axialLost: number | null;
	edgeLost: number | null;
	tracedNA: number | null;
	stop: { partIndex: number; surface: number } | null;
	grid: EdgeTrace | null;
	worstFill: number;
	rays: RayPath[];
}

/** The figures of a placement with a black box: paraxial only. */
function untraceableFigures(): RealRayFigures {
	return {
		axialRms: null,
		edgeRms: null,
		untracedReason: 'A part without a prescription (black box) cannot be traced with real rays; the answer is paraxial only.',
		axialLost: null,
		edgeLost: null,
		tracedNA: null,
		stop: null,
		grid: null,
		worstFill: 0,
		rays: []
	};
}

/**
 * Real rays through the traced system: the axial cone (what passes, the stop, the spot), the field
 * edge's grid, and with `drawing` the apertures' fill and the marginal, chief and edge-rim rays.
 */
function realRayFigures(sys: TraceSystem, q: EvalQuestion, drawing: boolean): RealRayFigures {
	const hEdge = q.objectHeightMm;
	const cone = axialCone(sys, q.objectNA);
	const axial = cone.passedSine > 0 ? axialSpot(sys, { na: cone.passedSine, rays: FAN_RAYS }) : null;
	const axialRms = axial ? axial.rmsAboutCentroidMm : null;
	const grid = hEdge > 0 ? edgeTrace(sys, hEdge, q.objectNA, cone.stopSurface) : null;
	return {
		axialRms,
		edgeRms: grid ? grid.rmsMm : axialRms,
		untracedReason: axialRms === null ? 'No real ray of the axial cone reaches the target plane.' : null,
		axialLost: cone.lostFraction,
		edgeLost: grid ? grid.lostFraction : 0,
		tracedNA: cone.passedSine,
		stop: cone.stopSurface >= 0 ? stopOf(sys, cone.stopSurface) : null,
		grid,
		worstFill: drawing ? worstApertureFill(sys, q) : 0,
		rays: drawing ? drawnRealRays(sys, hEdge, q.objectNA, cone.passedSine, grid) : []
	};
}

/** The largest ray height over clear semi-aperture at any surface (marginal, and chief and edge rim with a field). */
function worstApertureFill(sys: TraceSystem, q: EvalQuestion): number {
	const hEdge = q.objectHeightMm;
	let worst = 0;
	for (const sf of apertureReport(sys, hEdge, { na: q.objectNA }).surfaces) {
		if (!Number.isFinite(sf.semiApertureMm)) continue;
		for (const v of [sf.marginalMm, hEdge > 0 ? sf.chiefMm : null, hEdge > 0 ? sf.edgeRimMm : null]) {
			if (v !== null && Number.isFinite(v)) worst = Math.max(worst, v / sf.semiApertureMm);
		}
	}
	return worst;
}

/** The real rays drawn: both marginal rays of the cone that passes, and with a field the chief ray and both edge-rim rays. */
function drawnRealRays(sys: TraceSystem, hEdge: number, objectNA: number, passedSine: number, grid: EdgeTrace | null): RayPath[] {
	const rays: RayPath[] = [];
	for (const sgn of [1, -1]) {
		const pts = rayPolyline(sys, 0, sgn * passedSine);
		if (pts) rays.push({ kind: 'marginal', points: pts });
	}
	if (hEdge > 0 && grid) {
		const sc = grid.sinChief;
		const chief = rayPolyline(sys, hEdge, sc);
		if (chief) rays.push({ kind: 'chief', points: chief });
		for (const sgn of [1, -1]) {
			const off = rimOffset(sys, hEdge, sc, sgn, objectNA);
			const pts = off === null ? null : rayPolyline(sys, hEdge, sc + sgn * off);
			if (pts) rays.push({ kind: 'edge-rim', points: pts });
		}
	}
	return rays;
}

/** The answer's elements in the order light meets them (a part used twice: the second copy is to buy when only one is available). */
function solutionElements(choice: PlacementChoice, vertices: number[], symmetricParts: boolean[]): SolutionElement[] {
	const used = new Map<number, number>();
	return choice.elements.map((el, k) => {
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
}

/** Each part's focal length moved by its relative uncertainty both ways: the image shift and the magnification. */
function toleranceRows(choice: PlacementChoice): ToleranceRow[] {
	return choice.elements.map((_, k) => {
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
}

/** The ranking lives beside the types so that /build can explain it with the same code. */
export { rankKey, compareKeys } from '../../solver/ranking';
