/**
 * Figures of one answer of the beam modes, from the thick matrices (mode beam) or the matrices
 * and a real-ray trace (mode afocal): what the engineer sets up and checks on the bench. Used for
 * the search's best answers and again when a setup is saved (the server re-evaluates what it
 * stores, never a client's numbers).
 */
import {
	create,
	multiply,
	translation,
	cardinalPoints,
	rayleighRangeMm,
	waistRadiusMm,
	radiusAtQ,
	overlapFromQ,
	peakIrradianceWPerCm2,
	modeFieldDiameterMm,
	traceSystemFromLayout,
	traceRay,
	startRay,
	sagMm,
	RAY_STRIDE,
	TRACE_OK,
	type ThickElement
} from '../../optics';
import type { ParsedAfocalRequest, ParsedBeamRequest } from '../../solver/request';
import type { AfocalSolution, BeamAtPart, BeamSolution, BeamWaist, SolutionElement } from '../../solver/types';
import { orientationText } from '../../solver/orientation';
import { clearApertureOf, type CandidatePart } from './elements';

/** The beams of a mode-beam question in the solver's numbers (mm). */
export interface BeamNumbers {
	lambdaNm: number;
	m2: number;
	inWaistZMm: number;
	inWaistRadiusMm: number;
	inRayleighMm: number;
	targetZMm: number;
	targetWaistRadiusMm: number;
	targetRayleighMm: number;
}

/** The question's beams; the target waist is the fibre's mode field when a fibre is given. */
export function beamNumbers(req: ParsedBeamRequest): BeamNumbers {
	const m2 = req.input.mSquared;
	const inR = req.input.waistDiameterMm / 2;
	const f = req.target.fibre;
	const targetD =
		req.target.waistDiameterMm ??
		(f ? modeFieldDiameterMm(f.modeFieldDiameterMm !== undefined ? { modeFieldDiameterMm: f.modeFieldDiameterMm } : { coreDiameterMm: f.coreDiameterMm!, numericalAperture: f.numericalAperture! }, req.wavelengthNm) : null);
	if (targetD === null || targetD === undefined) throw new Error('beamNumbers: the schema guarantees a target size');
	return {
		lambdaNm: req.wavelengthNm,
		m2,
		inWaistZMm: req.input.waistPositionMm,
		inWaistRadiusMm: inR,
		inRayleighMm: rayleighRangeMm(inR, req.wavelengthNm, m2),
		targetZMm: req.target.waistPositionMm,
		targetWaistRadiusMm: targetD / 2,
		targetRayleighMm: rayleighRangeMm(targetD / 2, req.wavelengthNm, m2)
	};
}

function eflSource(part: CandidatePart): SolutionElement['eflSource'] {
	if (part.measured) return 'measured';
	return part.surfaces.length >= 2 ? 'prescription' : 'datasheet';
}

/** The parts of an answer as solution elements (the imaging answers' fields), first vertices given. */
export function solutionElements(parts: CandidatePart[], elements: ThickElement[], firstVertices: number[], symmetric: boolean[]): SolutionElement[] {
	const used = new Map<number, number>();
	return elements.map((el, k) => {
		const part = parts[k];
		const n = (used.get(part.partId) ?? 0) + 1;
		used.set(part.partId, n);
		const cp = cardinalPoints(el.matrix);
		const rel =
			part.measured && part.measured.uncertaintyMm !== null && part.measured.uncertaintyMm > 0 ? part.measured.uncertaintyMm / Math.abs(part.measured.eflMm) : 0.01;
		return {
			partId: part.partId,
			sku: part.sku,
			name: part.name,
			kind: part.kind,
			reversed: el.reversed,
			symmetric: symmetric[k],
			orientation: orientationText({ reversed: el.reversed, symmetric: symmetric[k], surfaces: el.surfaces }, 'beam'),
			firstVertexMm: firstVertices[k],
			thicknessMm: el.thicknessMm,
			eflMm: cp ? cp.eflMm : Infinity,
			eflSource: eflSource(part),
			eflRelativeUncertainty: rel,
			toBuy: part.available < n,
			available: part.available,
			locations: part.locations,
			clearApertureMm: clearApertureOf(part),
			diameterMm: part.diameterMm,
			surfaces: el.surfaces ? el.surfaces.map((s) => ({ radiusMm: s.radiusMm, vertexMm: s.vertexMm })) : null,
			frontPrincipalZMm: cp ? firstVertices[k] + cp.frontPrincipalMm : null,
			backPrincipalZMm: cp ? firstVertices[k] + el.thicknessMm + cp.backPrincipalMm : null
		};
	});
}

/** q through a matrix in air. */
function law(q: [number, number], m: ArrayLike<number>): [number, number] {
	const nr = m[0] * q[0] + m[1],
		ni = m[0] * q[1];
	const dr = m[2] * q[0] + m[3],
		di = m[2] * q[1];
	const den = dr * dr + di * di;
	return [(nr * dr + ni * di) / den, (ni * dr - nr * di) / den];
}

/** The beam walked through the placement: q before and after each part, and the efficiency. */
function walk(b: BeamNumbers, elements: ThickElement[], firstVertices: number[]) {
	let q: [number, number] = [firstVertices[0] - b.inWaistZMm, b.inRayleighMm];
	let z = firstVertices[0];
	const at: { before: [number, number]; after: [number, number] }[] = [];
	elements.forEach((el, k) => {
		if (k > 0) {
			q = [q[0] + (firstVertices[k] - z), q[1]];
			z = firstVertices[k];
		}
		const before = q;
		q = law(q, el.matrix);
		z += el.thicknessMm;
		at.push({ before, after: q });
	});
	const atTarget: [number, number] = [q[0] + (b.targetZMm - z), q[1]];
	return { at, lastZ: z, out: q, efficiency: overlapFromQ(atTarget[0], atTarget[1], 0, b.targetRayleighMm) };
}

/** The figures of a mode-beam answer: parts at first vertices p1 (and p1 + t1 + gap). */
export function evaluateBeam(
	req: ParsedBeamRequest,
	parts: CandidatePart[],
	elements: ThickElement[],
	p1: number,
	gapsMm: number[],
	symmetric: boolean[]
): Omit<BeamSolution, 'rank'> {
	const b = beamNumbers(req);
	const firstVertices = [p1];
	for (let k = 1; k < elements.length; k++) firstVertices.push(firstVertices[k - 1] + elements[k - 1].thicknessMm + gapsMm[k - 1]);
	const w = walk(b, elements, firstVertices);
	const radius = (q: [number, number]) => radiusAtQ(q[0], q[1], b.lambdaNm, b.m2);
	const outWaistZ = w.lastZ - w.out[0];
	const outW0 = waistRadiusMm(w.out[1], b.lambdaNm, b.m2);
	const beamParts: BeamAtPart[] = elements.map((el, k) => {
		const d = 2 * Math.max(radius(w.at[k].before), radius(w.at[k].after));
		const ca = clearApertureOf(parts[k]);
		const shifted = (dz: number) => walk(b, elements, firstVertices.map((v, j) => (j === k ? v + dz : v))).efficiency;
		const minus = shifted(-1),
			plus = shifted(1);
		return {
			partIndex: k,
			sku: parts[k].sku,
			beamDiameterMm: d,
			clearApertureMm: ca,
			clearance: ca / d,
			fillRatio: d / ca,
			efficiencyAtShift: [minus, plus],
			efficiencyDropPerMm: Math.max(0, w.efficiency - Math.min(minus, plus))
		};
	});
	const waists: BeamWaist[] = [{ kind: 'input', zMm: b.inWaistZMm, diameterMm: 2 * b.inWaistRadiusMm, rayleighRangeMm: b.inRayleighMm }];
	for (let k = 0; k + 1 < elements.length; k++) {
		const ahead = -w.at[k].after[0];
		if (ahead > 0 && ahead < gapsMm[k]) {
			waists.push({
				kind: 'intermediate',
				zMm: firstVertices[k] + elements[k].thicknessMm + ahead,
				diameterMm: 2 * waistRadiusMm(w.at[k].after[1], b.lambdaNm, b.m2),
				rayleighRangeMm: w.at[k].after[1]
			});
		}
	}
	waists.push({ kind: 'output', zMm: outWaistZ, diameterMm: 2 * outW0, rayleighRangeMm: w.out[1] });
	// System matrix from the input waist plane to the output waist plane.
	const sys = create();
	const step = create();
	multiply(sys, translation(step, firstVertices[0] - b.inWaistZMm), sys);
	elements.forEach((el, k) => {
		if (k > 0) multiply(sys, translation(step, gapsMm[k - 1]), sys);
		multiply(sys, el.matrix, sys);
	});
	multiply(sys, translation(step, outWaistZ - w.lastZ), sys);
	// Envelope samples: from the input waist (or, when it lies far back, a quarter of the bench before z = 0) to past the output waist.
	const span = Math.max(b.targetZMm, outWaistZ, 1);
	const zStart = Math.max(Math.min(0, b.inWaistZMm), -0.25 * span);
	const zEnd = outWaistZ + Math.min(Math.max(2 * w.out[1], 0.1 * span), 0.5 * span);
	const envelope: [number, number][] = [];
	const radiusAtZ = (z: number): number => {
		if (z <= firstVertices[0]) return radius([z - b.inWaistZMm, b.inRayleighMm]);
		for (let k = 0; k < elements.length; k++) {
			const zf = firstVertices[k],
				zb = zf + elements[k].thicknessMm;
			if (z <= zb) {
				const r0 = radius(w.at[k].before),
					r1 = radius(w.at[k].after);
				return zb > zf ? r0 + ((r1 - r0) * (z - zf)) / (zb - zf) : r1;
			}
			const next = k + 1 < elements.length ? firstVertices[k + 1] : Infinity;
			if (z <= next) return radius([w.at[k].after[0] + (z - zb), w.at[k].after[1]]);
		}
		return radius([w.out[0] + (z - w.lastZ), w.out[1]]);
	};
	const N = 160;
	const zs = new Set<number>();
	for (let i = 0; i <= N; i++) zs.add(zStart + ((zEnd - zStart) * i) / N);
	for (let k = 0; k < elements.length; k++) zs.add(firstVertices[k]).add(firstVertices[k] + elements[k].thicknessMm);
	for (const wz of waists) if (wz.zMm >= zStart && wz.zMm <= zEnd) zs.add(wz.zMm);
	for (const z of [...zs].sort((x, y) => x - y)) envelope.push([z, radiusAtZ(z)]);
	const last = firstVertices[firstVertices.length - 1] + elements[elements.length - 1].thicknessMm;
	return {
		mode: 'beam',
		elements: solutionElements(parts, elements, firstVertices, symmetric),
		objectDistanceMm: firstVertices[0],
		gapsMm,
		backDistanceMm: b.targetZMm - last,
		beam: {
			outputWaistDiameterMm: 2 * outW0,
			outputWaistPositionMm: outWaistZ,
			efficiency: w.efficiency,
			minClearance: Math.min(...beamParts.map((p) => p.clearance)),
			lengthMm: last - firstVertices[0],
			targetWaistDiameterMm: 2 * b.targetWaistRadiusMm,
			targetWaistPositionMm: b.targetZMm,
			waistOffsetMm: outWaistZ - b.targetZMm,
			outputRayleighRangeMm: w.out[1],
			outputDivergenceMrad: 2 * ((b.m2 * b.lambdaNm * 1e-6) / (Math.PI * outW0)) * 1000,
			peakIrradianceWPerCm2: req.powerW !== undefined ? peakIrradianceWPerCm2(req.powerW, outW0) : null,
			waists,
			parts: beamParts,
			systemMatrix: { A: sys[0], B: sys[1], C: sys[2], D: sys[3] },
			envelope
		}
	};
}

/**
 * The figures of a mode-afocal answer: part 1 at 0, part 2 after `gapMm`. The residual
 * divergence is the angle of the real ray that enters parallel to the axis at the input beam's
 * full 1/e² radius; null when a part has no surfaces (black box) and so cannot be traced, or
 * `clipped` when that ray misses a surface or a clear aperture.
 */
export function evaluateAfocal(
	req: ParsedAfocalRequest,
	parts: CandidatePart[],
	elements: ThickElement[],
	gapMm: number,
	symmetric: boolean[]
): { solution: Omit<AfocalSolution, 'rank'>; clipped: boolean } {
	const [e1, e2] = elements;
	const m = multiply(create(), e2.matrix, multiply(create(), translation(create(), gapMm), e1.matrix));
	const A = m[0];
	const dIn = req.inputBeamDiameterMm;
	const mid = e1.matrix[0] + gapMm * e1.matrix[2];
	const focus = Math.abs(e1.matrix[2]) > 1e-15 ? -e1.matrix[0] / e1.matrix[2] : null;
	const hasFocus = focus !== null && focus > 0 && focus < gapMm;
	const diam = [dIn, Math.abs(e1.matrix[0]) * dIn, Math.abs(mid) * dIn, Math.abs(A) * dIn];
	const beamParts: BeamAtPart[] = [0, 1].map((k) => {
		const d = Math.max(diam[2 * k], diam[2 * k + 1]);
		const ca = clearApertureOf(parts[k]);
		return { partIndex: k, sku: parts[k].sku, beamDiameterMm: d, clearApertureMm: ca, clearance: ca / d, fillRatio: d / ca };
	});
	let residual: number | null = null;
	let clipped = false;
	let marginalRay: [number, number][] | null = null;
	const sys = traceSystemFromLayout({ objectDistanceMm: 0, elements, gapsMm: [gapMm], backDistanceMm: 0 });
	if (sys.ok) {
		const ray = new Float64Array(RAY_STRIDE);
		const heights = new Float64Array(sys.value.count);
		startRay(ray, dIn / 2, 0);
		// The collimated input ray starts well before the first vertex: a concave first face lies in front of it.
		ray[0] = -Math.max(10, e1.thicknessMm + gapMm);
		const status = traceRay(sys.value, ray, heights);
		if (status !== TRACE_OK) clipped = true;
		else {
			for (let k = 0; k < sys.value.count; k++) if (Math.abs(heights[k]) > sys.value.semiApertureMm[k]) clipped = true;
			residual = Math.abs(Math.atan2(ray[3], ray[2])) * 1000;
			const length = e1.thicknessMm + gapMm + e2.thicknessMm;
			const pts: [number, number][] = [[Math.min(-0.1 * length, -5), dIn / 2]];
			for (let k = 0; k < sys.value.count; k++) pts.push([sys.value.zMm[k] + (sagMm(sys.value.curvaturePerMm[k], heights[k]) ?? 0), heights[k]]);
			const zOut = length + Math.max(0.3 * length, 20);
			pts.push([zOut, ray[1] + ((zOut - ray[0]) * ray[3]) / ray[2]]);
			marginalRay = pts;
		}
	}
	return {
		clipped,
		solution: {
			mode: 'afocal',
			elements: solutionElements(parts, elements, [0, e1.thicknessMm + gapMm], symmetric),
			objectDistanceMm: 0,
			gapsMm: [gapMm],
			backDistanceMm: 0,
			afocal: {
				expansion: Math.abs(A),
				lengthMm: e1.thicknessMm + gapMm + e2.thicknessMm,
				inverted: A < 0,
				residualDivergenceMrad: residual,
				intermediateFocusMm: hasFocus ? e1.thicknessMm + (focus as number) : null,
				gapMm,
				outputBeamDiameterMm: Math.abs(A) * dIn,
				minClearance: Math.min(beamParts[0].clearance, beamParts[1].clearance),
				parts: beamParts,
				systemMatrix: { A: m[0], B: m[1], C: m[2], D: m[3] },
				marginalRay
			}
		}
	};
}
