/**
 * Words and figures of beam and afocal answers for the pages and build sheets: where the beam
 * comes to a focus (for the laser caution) and the irradiance there. Pure functions of the
 * solver's answer, shared by /build, the setup page and the build sheet.
 */
import type { ParsedAfocalRequest, ParsedBeamRequest, ParsedSolveRequest } from '$lib/solver/request';
import type { AfocalSolution, AnySolution, BeamSolution } from '$lib/solver/types';
import { beamSegments, peakIrradianceWPerCm2, smallLength } from './beam-envelope';

/** A focus named in the caution: a sentence without its full stop, and the irradiance there (W/cm², null without a power). */
export interface CautionFocus {
	sentence: string;
	irradianceWPerCm2: number | null;
	/** 1/e² diameter at the focus, mm. */
	diameterMm: number;
}

/**
 * A beam answer from stock below this efficiency makes /build offer "What purchase would help?"
 * (our own line for "good enough to build", common practice, no source).
 */
export const GOOD_EFFICIENCY = 0.9;

/** An input waist at most this wide counts as a focus of its own (a fibre end, a focused laser), mm (common practice, no source). */
export const SMALL_WAIST_MM = 0.2;

const mm = (x: number) => `${x.toFixed(1)} mm`;

/** The foci of a beam answer: a real focus between the parts, the output waist, and a small input waist (a fibre end). */
export function beamFoci(s: BeamSolution, powerW: number | null): CautionFocus[] {
	const last = s.elements[s.elements.length - 1];
	const lastVertex = last.firstVertexMm + last.thicknessMm;
	const irr = (d: number) => (powerW ? peakIrradianceWPerCm2(powerW, d / 2) : null);
	const out: CautionFocus[] = [];
	for (const w of s.beam.waists) {
		if (w.kind === 'input' && w.diameterMm <= SMALL_WAIST_MM) {
			out.push({ sentence: `The beam starts from a focus (Ø ${smallLength(w.diameterMm)}) at z = ${mm(w.zMm)}`, irradianceWPerCm2: irr(w.diameterMm), diameterMm: w.diameterMm });
		} else if (w.kind === 'intermediate') {
			out.push({ sentence: `The beam comes to a focus between the parts, at z = ${mm(w.zMm)} (Ø ${smallLength(w.diameterMm)})`, irradianceWPerCm2: irr(w.diameterMm), diameterMm: w.diameterMm });
		} else if (w.kind === 'output') {
			const after = w.zMm - lastVertex;
			const place = after >= 0 ? `${mm(after)} past the last vertex of part ${s.elements.length} (${last.sku})` : `${mm(-after)} before the last vertex (inside or before the last part)`;
			const focused = w.diameterMm < s.beam.waists[0].diameterMm;
			out.push({
				sentence: focused
					? `The beam comes to a focus (Ø ${smallLength(w.diameterMm)}) at z = ${mm(w.zMm)} from the reference plane, ${place}`
					: `The beam leaves the setup with its waist (Ø ${smallLength(w.diameterMm)}) at z = ${mm(w.zMm)} from the reference plane, ${place}`,
				irradianceWPerCm2: s.beam.peakIrradianceWPerCm2 ?? irr(w.diameterMm),
				diameterMm: w.diameterMm
			});
		}
	}
	return out;
}

/** The beam of an afocal answer in air: a collimated input waist at the first vertex (positions from it). */
export function afocalSegments(s: AfocalSolution, inputBeamDiameterMm: number, wavelengthNm: number) {
	return beamSegments({ waistDiameterMm: inputBeamDiameterMm, waistPositionMm: 0, mSquared: 1, wavelengthNm }, s.elements);
}

/** The foci of an afocal answer: the real focus between the parts, when there is one. */
export function afocalFoci(s: AfocalSolution, inputBeamDiameterMm: number, wavelengthNm: number, powerW: number | null): CautionFocus[] {
	if (s.afocal.intermediateFocusMm === null) return [];
	const between = afocalSegments(s, inputBeamDiameterMm, wavelengthNm)[1];
	const d = between ? 2 * between.waistRadiusMm : NaN;
	return [
		{
			sentence: `The beam comes to a focus between the two parts, ${mm(s.afocal.intermediateFocusMm)} after the first vertex (Ø about ${smallLength(d)})`,
			irradianceWPerCm2: powerW && Number.isFinite(d) ? peakIrradianceWPerCm2(powerW, d / 2) : null,
			diameterMm: d
		}
	];
}

/** Efficiency as a percentage with one decimal: 0.9734 → "97.3 %". */
export const percentText = (x: number | null | undefined) => (x === null || x === undefined || !Number.isFinite(x) ? '–' : `${(x * 100).toFixed(1)} %`);

/** A beam or afocal question in one line, for the setup page and the build sheet. */
export function beamQuestionText(q: ParsedBeamRequest | ParsedAfocalRequest): string {
	const f1 = (x: number) => x.toFixed(1);
	if (q.mode === 'afocal') {
		const kind = q.intermediateFocus === true ? ', with a focus between the parts' : q.intermediateFocus === false ? ', without a focus between the parts' : '';
		return `Expand a ${smallLength(q.inputBeamDiameterMm)} beam ${q.expansion}× (±${(q.expansionTolerance * 100).toFixed(1)} %), at most ${f1(q.maxLengthMm)} mm long${kind}; λ = ${f1(q.wavelengthNm)} nm.`;
	}
	const i = q.input;
	const t = q.target;
	const target = t.fibre
		? t.fibre.modeFieldDiameterMm !== undefined
			? `into a fibre of mode field Ø ${smallLength(t.fibre.modeFieldDiameterMm)} with its face at z = ${f1(t.waistPositionMm)} mm`
			: `into a fibre of core Ø ${smallLength(t.fibre.coreDiameterMm ?? NaN)}, NA ${t.fibre.numericalAperture}, with its face at z = ${f1(t.waistPositionMm)} mm`
		: `to a waist of Ø ${smallLength(t.waistDiameterMm ?? NaN)} at z = ${f1(t.waistPositionMm)} mm`;
	return `Shape a beam with its waist of Ø ${smallLength(i.waistDiameterMm)} at z = ${f1(i.waistPositionMm)} mm (M² ${i.mSquared}) ${target}; λ = ${f1(q.wavelengthNm)} nm${q.powerW ? `, ${q.powerW} W` : ''}.`;
}

/** The foci of any answer for the caution (none for imaging, whose caution is general); `powerW` overrides the question's. */
export function fociOf(solution: AnySolution, query: ParsedSolveRequest, powerW: number | null = null): CautionFocus[] {
	if (solution.mode === 'beam') return beamFoci(solution, powerW ?? (query.mode === 'beam' ? (query.powerW ?? null) : null));
	if (solution.mode === 'afocal' && query.mode === 'afocal') return afocalFoci(solution, query.inputBeamDiameterMm, query.wavelengthNm, powerW);
	return [];
}
