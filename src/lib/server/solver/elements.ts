/**
 * Candidate parts → the solver's element snapshot at one wavelength: every part in both
 * orientations as a thick element, packed struct-of-arrays for the hot loop (the optics
 * core's `packElement` layout) with the Seidel quartic of each element beside it.
 * Pure: no database; `load-stock.ts` produces the candidate parts.
 */
import {
	buildElement,
	blackBoxElement,
	reverseElement,
	packElement,
	ELEMENT_STRIDE,
	resolveMaterial,
	GLASS_CODE_RANGE_NM,
	type ThickElement,
	type SurfaceSpec
} from '../../optics';
import type { PartPlace } from '../../solver/types';
import { SEIDEL_STRIDE, seidelPolynomial } from '../../solver/search/seidel-poly';
import { coatingWarnings, datasheetOnlyReason, exclusionReason } from './exclusions';
import { rayTable, type RayTable } from '../../solver/search/rank-bound';

/** A catalogue part as the solver sees it. */
export interface CandidatePart {
	partId: number;
	sku: string;
	name: string;
	kind: string;
	diameterMm: number;
	/** Clear aperture, mm; null means the default 90 % of the diameter (common practice, no source). */
	clearApertureMm: number | null;
	surfaces: SurfaceSpec[];
	/** Datasheet numbers, used when there are no surfaces (black box). */
	eflMm: number | null;
	bflMm: number | null;
	centerThicknessMm: number | null;
	designWavelengthNm: number;
	/** Latest measurement of the EFL, if any. */
	measured: { eflMm: number; wavelengthNm: number; uncertaintyMm: number | null } | null;
	/** Usable units on hand. */
	onHand: number;
	/** On hand minus active, unexpired reservations. */
	available: number;
	/** Where the usable units are. */
	locations: PartPlace[];
	/** The coating text and the band read from it (`$lib/coating`); absent or null: no band known. */
	coating?: string | null;
	coatingBandNm?: { minNm: number; maxNm: number } | null;
}

/** Clear aperture in use: the stated one or 90 % of the diameter (common practice, no source). */
export function clearApertureOf(part: Pick<CandidatePart, 'clearApertureMm' | 'diameterMm'>): number {
	return part.clearApertureMm ?? 0.9 * part.diameterMm;
}

/** The element snapshot of a set of candidate parts at one wavelength. */
export interface ElementSnapshot {
	wavelengthNm: number;
	/** Oriented elements (object form, for tracing and output). */
	elements: ThickElement[];
	/** ELEMENT_STRIDE numbers per element (see optics/snapshot.ts). */
	packed: Float64Array;
	/** SEIDEL_STRIDE numbers per element (see seidel-poly.ts). */
	seidel: Float64Array;
	/** Index into `parts` of each element. */
	partIndex: Int32Array;
	/** 1 when the element is its part turned round. */
	reversed: Uint8Array;
	/** Parts in the order of the candidate list given. */
	parts: CandidatePart[];
	/** Per part: turning it round gives the same optics (one element only). */
	symmetricPart: boolean[];
	/** 1 for an element without surfaces (black box: no real-ray trace). */
	untraceable: Uint8Array;
	/** The elements' surfaces as the rank bound traces them (rank-bound.ts). */
	rays: RayTable;
	/** 1 for an element whose part is used outside its coating band at this wavelength (a coating warning). */
	coatOut: Uint8Array;
	/** Parts that cannot be built at this wavelength, with the reason (grouped into `stats.partsExcluded`). */
	skipped: { sku: string; reason: string; part: CandidatePart }[];
}

/** The part as a thick element in catalogue orientation, or the reason it cannot be one. */
export function partElement(part: CandidatePart, wavelengthNm: number): { ok: true; element: ThickElement } | { ok: false; reason: string } {
	const clearApertureMm = clearApertureOf(part);
	const measured = part.measured ? { eflMm: part.measured.eflMm, wavelengthNm: part.measured.wavelengthNm } : null;
	if (part.surfaces.length >= 2) {
		const r = buildElement(part.surfaces, wavelengthNm, { clearApertureMm, outerDiameterMm: part.diameterMm, measured });
		return r.ok ? { ok: true, element: r.value } : { ok: false, reason: exclusionReason(r.error, wavelengthNm) };
	}
	if (wavelengthNm < GLASS_CODE_RANGE_NM[0] || wavelengthNm > GLASS_CODE_RANGE_NM[1]) {
		return { ok: false, reason: datasheetOnlyReason(wavelengthNm, GLASS_CODE_RANGE_NM) };
	}
	if (part.eflMm === null || part.bflMm === null || part.centerThicknessMm === null) {
		return { ok: false, reason: 'No prescription and no EFL, BFL and centre thickness to model it from.' };
	}
	const r = blackBoxElement(
		{
			eflMm: part.eflMm,
			bflMm: part.bflMm,
			centerThicknessMm: part.centerThicknessMm,
			designWavelengthNm: part.designWavelengthNm,
			clearApertureMm,
			measured
		},
		wavelengthNm
	);
	return r.ok ? { ok: true, element: r.value } : { ok: false, reason: exclusionReason(r.error, wavelengthNm) };
}

/** True when turning the element round gives the same optics (equiconvex lens, window). */
function symmetric(a: ThickElement, b: ThickElement): boolean {
	const m = a.matrix,
		n = b.matrix;
	for (let k = 0; k < 4; k++) if (Math.abs(m[k] - n[k]) > 1e-12 * Math.max(1, Math.abs(m[k]))) return false;
	const sa = a.surfaces,
		sb = b.surfaces;
	if (sa === null || sb === null) return sa === sb;
	if (sa.length !== sb.length) return false;
	return sa.every((s, k) => s.radiusMm === sb[k].radiusMm && s.indexAfter === sb[k].indexAfter);
}

/**
 * Builds the snapshot: each part in catalogue orientation and turned round (once when both
 * are the same optics), skipping parts that cannot be built at the wavelength.
 */
export function buildElementSnapshot(parts: readonly CandidatePart[], wavelengthNm: number): ElementSnapshot {
	const elements: ThickElement[] = [];
	const partIdx: number[] = [];
	const rev: number[] = [];
	const kept: CandidatePart[] = [];
	const sym: boolean[] = [];
	const skipped: ElementSnapshot['skipped'] = [];
	for (const part of parts) {
		const built = partElement(part, wavelengthNm);
		if (!built.ok) {
			skipped.push({ sku: part.sku, reason: built.reason, part });
			continue;
		}
		const pi = kept.length;
		kept.push(part);
		const fwd = built.element;
		const back = reverseElement(fwd);
		elements.push(fwd);
		partIdx.push(pi);
		rev.push(0);
		const same = symmetric(fwd, back);
		sym.push(same);
		if (!same) {
			elements.push(back);
			partIdx.push(pi);
			rev.push(1);
		}
	}
	const packed = new Float64Array(elements.length * ELEMENT_STRIDE);
	const seidel = new Float64Array(elements.length * SEIDEL_STRIDE);
	elements.forEach((e, k) => {
		packElement(packed, k, e);
		seidelPolynomial(e.surfaces, seidel, k * SEIDEL_STRIDE);
	});
	return {
		wavelengthNm,
		elements,
		packed,
		seidel,
		partIndex: Int32Array.from(partIdx),
		reversed: Uint8Array.from(rev),
		parts: kept,
		symmetricPart: sym,
		untraceable: Uint8Array.from(elements.map((e) => (e.surfaces === null ? 1 : 0))),
		rays: rayTable(elements, partIdx.map((k) => kept[k].diameterMm)),
		coatOut: Uint8Array.from(partIdx.map((k) => (coatingWarnings([kept[k]], wavelengthNm).length > 0 ? 1 : 0))),
		skipped
	};
}

/**
 * True when at least one material the parts use has a dispersion formula covering the
 * wavelength (a datasheet-only part counts as glass, 365–1100 nm): otherwise the question
 * names a wavelength outside every material's range.
 */
export function wavelengthCoveredByAnyMaterial(parts: readonly CandidatePart[], wavelengthNm: number): boolean {
	const seen = new Set<string>();
	for (const p of parts) {
		// A datasheet-only part is taken to be optical glass (the glass-code range).
		if (p.surfaces.length < 2 && wavelengthNm >= GLASS_CODE_RANGE_NM[0] && wavelengthNm <= GLASS_CODE_RANGE_NM[1]) return true;
		for (const s of p.surfaces) if (s.material) seen.add(s.material);
	}
	for (const name of seen) {
		try {
			const m = resolveMaterial(name);
			if (wavelengthNm >= m.minNm && wavelengthNm <= m.maxNm) return true;
		} catch {
			// unknown material: that part is skipped anyway
		}
	}
	return false;
}
