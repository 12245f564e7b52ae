/**
 * The solver's output stage for one placement: the object-to-target matrix and its check,
 * exact real rays (axial spot, field-edge spot, clear-aperture report), the Airy radius,
 * the rays of the drawing, and the tolerance view. Used for the search's best candidates
 * and again, independently, when a setup is saved (the server re-evaluates what it stores).
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
	tangentialSpot,
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
	firstVertexPositionsMm,
	type Layout,
	type ThickElement,
	type TraceSystem
} from '../../optics';
import type { RayPath, Solution, SolutionElement, ToleranceRow } from '../../solver/types';
import { orientationText } from '../../solver/orientation';
import { clearApertureOf, type CandidatePart } from './elements';

/** Tolerance of the independent matrix check of a returned solution (|B| in mm, |A − m| relative). */
export const VERIFY_B_TOL_MM = 1e-6;
export const VERIFY_A_TOL = 1e-6;

/** Rays per fan of the final trace. */
const FAN_RAYS = 32;

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
	const upTo = status === TRACE_OK ? sys.count : ray[5];
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

/** The paraxial construction of the whole system: parallel ray, focal ray, both via H and H'. */
function principalRays(layout: Layout, systemLens: Float64Array, imageY: number, h: number, trackMm: number): RayPath[] {
	const cp = cardinalPoints(systemLens);
	if (!cp || h === 0) return [];
	const z1 = layout.objectDistanceMm; // first vertex
	const zLast = trackMm - layout.backDistanceMm; // last vertex
	const zH = z1 + cp.frontPrincipalMm,
		zH2 = zLast + cp.backPrincipalMm;
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

/** Evaluates a placement (see the module comment). */
export function evaluatePlacement(choice: PlacementChoice, q: EvalQuestion, symmetricParts: boolean[]): Evaluated {
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

	const airy = airyRadiusMm(q.wavelengthNm, workingFNumber(imageSideNA(q.objectNA, mag)));
	const traced = traceSystemFromLayout(layout);
	let axialRms: number | null = null,
		edgeRms: number | null = null,
		untracedReason: string | null = null;
	let vigAxial = false,
		vigEdge = false,
		worstFill = 0;
	const rays: RayPath[] = [];
	if (traced.ok) {
		const sys = traced.value;
		const opts = { na: q.objectNA, rays: FAN_RAYS };
		const axial = axialSpot(sys, opts);
		axialRms = axial ? axial.rmsAboutChiefMm : null;
		if (q.objectHeightMm > 0) {
			const edge = tangentialSpot(sys, q.objectHeightMm, opts);
			edgeRms = edge ? edge.rmsAboutChiefMm : null;
		} else edgeRms = axialRms;
		const rep = apertureReport(sys, q.objectHeightMm, opts);
		for (const s of rep.surfaces) {
			if (Number.isFinite(s.semiApertureMm)) {
				const m = s.marginalMm ?? Infinity;
				const e = Math.max(s.chiefMm ?? 0, s.edgeRimMm ?? Infinity);
				if (m > s.semiApertureMm) vigAxial = true;
				if (q.objectHeightMm > 0 && e > s.semiApertureMm) vigEdge = true;
				worstFill = Math.max(worstFill, Math.max(m, q.objectHeightMm > 0 ? e : 0) / s.semiApertureMm);
			}
		}
		if (rep.raysFailed > 0) {
			vigAxial ||= rep.surfaces.some((s) => s.marginalMm === null);
			vigEdge ||= q.objectHeightMm > 0;
		}
		if (axialRms === null) untracedReason = 'No real ray of the axial fan reaches the target plane.';
		const na = q.objectNA;
		for (const sgn of [1, -1]) {
			const pts = rayPolyline(sys, 0, sgn * na);
			if (pts) rays.push({ kind: 'marginal', points: pts });
		}
		if (q.objectHeightMm > 0) {
			const sc = chiefSine(sys, q.objectHeightMm);
			const chief = rayPolyline(sys, q.objectHeightMm, sc);
			if (chief) rays.push({ kind: 'chief', points: chief });
			for (const sgn of [1, -1]) {
				const pts = rayPolyline(sys, q.objectHeightMm, sc + sgn * na);
				if (pts) rays.push({ kind: 'edge-rim', points: pts });
			}
		}
	} else {
		untracedReason = 'A part without a prescription (black box) cannot be traced with real rays; the answer is paraxial only.';
	}
	const h = q.objectHeightMm > 0 ? q.objectHeightMm : Math.max(1, 0.2 * Math.min(...choice.parts.map((p) => clearApertureOf(p) / 2)));
	rays.push(...principalRays(layout, lens, mag * h, h, q.trackMm));

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
				untracedReason,
				screenEstimateMm: choice.screenEstimateMm
			},
			vignetting: { axial: vigAxial, edge: vigEdge, worstFill },
			rays,
			tolerance
		}
	};
}

/** The ranking lives beside the types so that /build can explain it with the same code. */
export { rankKey, compareKeys } from '../../solver/ranking';
