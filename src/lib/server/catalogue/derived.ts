/**
 * Derived optics values of a part, computed by the optics core (`$lib/optics`): the
 * paraxial EFL at the lab's default wavelength that the catalogue sorts and filters on,
 * and the full paraxial data (EFL, BFL, FFL, principal planes, ABCD) the part page shows
 * at a wavelength the user picks.
 *
 * Which model a part gets:
 * - surfaces (≥ 2): a thick element from its prescription (`buildElement`);
 * - no surfaces but a datasheet EFL, BFL and centre thickness: the black-box model
 *   (`blackBoxElement`) with the first material for dispersion, if one is known;
 * - only a datasheet EFL: that number as it stands (no dispersion, no planes);
 * and in each case the latest measurement, when there is one, rescales the model to the
 * measured EFL at its own wavelength (DESIGN.md: the solver uses the measured EFL).
 */
import {
	blackBoxElement,
	buildElement,
	cardinalPoints,
	type Result,
	type SurfaceSpec,
	type ThickElement
} from '../../optics'; // relative, so the seed (plain tsx, no $lib alias) can use this module

/** Where a computed EFL comes from (stored in parts.efl_source). */
export type EflSource = 'prescription' | 'nominal' | 'measured';

/** The numbers of a part that the optics needs (a subset of the Part row). */
export interface OpticsPart {
	readonly surfaces: readonly SurfaceSpec[];
	readonly eflMm: number | null;
	readonly bflMm: number | null;
	readonly centerThicknessMm: number | null;
	readonly designWavelengthNm: number;
	readonly diameterMm: number;
	readonly clearApertureMm: number | null;
	readonly primaryMaterial: string | null;
}

/** The surfaces in the optics core's shape (last surface without thickness or material). */
export function toSurfaceSpecs(surfaces: readonly { radiusMm: number | null; thicknessMm?: number | null; material?: string | null }[]): SurfaceSpec[] {
	return surfaces.map((s, i) =>
		i === surfaces.length - 1 ? { radiusMm: s.radiusMm } : { radiusMm: s.radiusMm, thicknessMm: s.thicknessMm ?? 0, material: s.material ?? null }
	);
}

/** The optics numbers of a stored part: its parts row and its part_surfaces rows (in position order). */
export function opticsPartOf(
	part: Omit<OpticsPart, 'surfaces'>,
	surfaces: readonly { radiusMm: number | null; thicknessMm: number | null; materialCode: string | null }[]
): OpticsPart {
	return {
		surfaces: toSurfaceSpecs(surfaces.map((s) => ({ radiusMm: s.radiusMm, thicknessMm: s.thicknessMm, material: s.materialCode }))),
		eflMm: part.eflMm,
		bflMm: part.bflMm,
		centerThicknessMm: part.centerThicknessMm,
		designWavelengthNm: part.designWavelengthNm,
		diameterMm: part.diameterMm,
		clearApertureMm: part.clearApertureMm,
		primaryMaterial: part.primaryMaterial
	};
}

/** The latest measurement of a part, if any. */
export interface MeasuredEfl {
	readonly eflMm: number;
	readonly wavelengthNm: number;
}

/** Paraxial data of one part at one wavelength (all lengths in mm, see `CardinalPoints`). */
export interface Derived {
	readonly wavelengthNm: number;
	readonly source: EflSource;
	/** 'prescription' | 'black-box' | 'nominal-only' (no model, just the datasheet EFL). */
	readonly model: 'prescription' | 'black-box' | 'nominal-only';
	readonly eflMm: number;
	readonly bflMm: number | null;
	readonly fflMm: number | null;
	/** H from the first vertex, mm (+ to the right). */
	readonly frontPrincipalMm: number | null;
	/** H' from the last vertex, mm (+ to the right). */
	readonly backPrincipalMm: number | null;
	/** Vertex-to-vertex ABCD matrix [A, B, C, D] (reduced form), or null without a model. */
	readonly abcd: [number, number, number, number] | null;
	/** Factor applied to the curvatures to match the measurement (1 when none). */
	readonly curvatureScale: number;
}

/** A failure the part page can show ("unknown material", "wavelength out of range"...). */
export type DerivedResult = { ok: true; value: Derived } | { ok: false; code: string; message: string };

function elementFor(part: OpticsPart, wavelengthNm: number, measured: MeasuredEfl | null): Result<ThickElement> | null {
	const clearApertureMm = part.clearApertureMm ?? null;
	if (part.surfaces.length >= 2) {
		return buildElement(part.surfaces, wavelengthNm, { clearApertureMm, measured });
	}
	if (part.eflMm !== null && part.bflMm !== null && part.centerThicknessMm !== null) {
		return blackBoxElement(
			{
				eflMm: part.eflMm,
				bflMm: part.bflMm,
				centerThicknessMm: part.centerThicknessMm,
				material: part.primaryMaterial,
				designWavelengthNm: part.designWavelengthNm,
				clearApertureMm,
				measured
			},
			wavelengthNm
		);
	}
	return null;
}

/**
 * Paraxial data of `part` at `wavelengthNm`, rescaled to `measured` when given. Never
 * throws for bad data: a failure comes back as `{ ok: false, code, message }`.
 */
export function computeDerived(part: OpticsPart, wavelengthNm: number, measured: MeasuredEfl | null = null): DerivedResult {
	const result = elementFor(part, wavelengthNm, measured);
	const source: EflSource = measured ? 'measured' : part.surfaces.length >= 2 ? 'prescription' : 'nominal';
	if (result === null) {
		// Only a datasheet EFL: no dispersion model, so the number holds at any wavelength
		// as the best we know; a measurement replaces it as it stands.
		const eflMm = measured?.eflMm ?? part.eflMm;
		if (eflMm === null) return { ok: false, code: 'no-prescription', message: 'The part has neither surfaces nor a datasheet EFL.' };
		return {
			ok: true,
			value: {
				wavelengthNm,
				source,
				model: 'nominal-only',
				eflMm,
				bflMm: measured ? null : part.bflMm,
				fflMm: null,
				frontPrincipalMm: null,
				backPrincipalMm: null,
				abcd: null,
				curvatureScale: 1
			}
		};
	}
	if (!result.ok) return { ok: false, code: result.error.code, message: result.error.message };
	const el = result.value;
	const cp = cardinalPoints(el.matrix);
	if (cp === null) return { ok: false, code: 'afocal', message: 'The part has no power (afocal): it has no focal length.' };
	return {
		ok: true,
		value: {
			wavelengthNm,
			source,
			model: el.kind,
			eflMm: cp.eflMm,
			bflMm: cp.bflMm,
			fflMm: cp.fflMm,
			frontPrincipalMm: cp.frontPrincipalMm,
			backPrincipalMm: cp.backPrincipalMm,
			abcd: [el.matrix[0], el.matrix[1], el.matrix[2], el.matrix[3]],
			curvatureScale: el.curvatureScale
		}
	};
}

/**
 * The values stored on the parts row for sorting and filtering: the EFL at the lab's
 * default wavelength and where it comes from. When the model fails (say a material the
 * core does not know) it falls back to the datasheet EFL, marked 'nominal', or null.
 */
export function paraxialColumns(
	part: OpticsPart,
	defaultWavelengthNm: number,
	measured: MeasuredEfl | null
): { paraxialEflMm: number | null; eflSource: EflSource | null } {
	const r = computeDerived(part, defaultWavelengthNm, measured);
	if (r.ok) return { paraxialEflMm: round6(r.value.eflMm), eflSource: r.value.source };
	if (measured) return { paraxialEflMm: measured.eflMm, eflSource: 'measured' };
	return part.eflMm === null ? { paraxialEflMm: null, eflSource: null } : { paraxialEflMm: part.eflMm, eflSource: 'nominal' };
}

/** Rounds to 1 nm of focal length: stored values then compare equal across recomputations. */
function round6(x: number): number {
	return Math.round(x * 1e6) / 1e6;
}
