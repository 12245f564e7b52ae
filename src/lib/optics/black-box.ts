/**
 * Black-box elements: parts known only by a datasheet's EFL, BFL and centre thickness,
 * without radii. They become a matrix with the same power and principal planes, so the
 * solver can place them like any other part (no real-ray trace: they have no surfaces).
 */
import { type Result, ok, fail, InvalidPrescriptionError, OpticsError } from './errors';
import { create, fromPrincipalPlanes } from './matrix';
import { refractiveIndex, WAVELENGTH_D_NM } from './materials';
import type { ThickElement } from './element';

/** Index assumed for the principal-plane separation when the material is unknown. */
export const BLACK_BOX_DEFAULT_INDEX = 1.5;

/** What a datasheet gives for a part without a prescription. */
export interface BlackBoxSpec {
	/** Effective focal length at the design wavelength, mm (negative for a diverging part). */
	readonly eflMm: number;
	/** Back focal length (last vertex to F'), mm, at the design wavelength. */
	readonly bflMm: number;
	/** Centre thickness (first to last vertex), mm. */
	readonly centerThicknessMm: number;
	/** Front focal length (F to first vertex), mm, if the datasheet gives it. */
	readonly fflMm?: number | null;
	/** Material, if known: gives the dispersion and the principal-plane separation. */
	readonly material?: string | null;
	/** Wavelength of the datasheet values, nm (default: the d line, 587.56 nm). */
	readonly designWavelengthNm?: number | null;
	/** Clear aperture diameter, mm. */
	readonly clearApertureMm?: number | null;
	/** A measured EFL at its own wavelength; the power is rescaled to it. */
	readonly measured?: { readonly eflMm: number; readonly wavelengthNm: number } | null;
}

/**
 * An element with the datasheet's cardinal points, at `wavelengthNm`.
 *
 * - Power 1/EFL; H' at BFL − EFL from the last vertex (exact, from the datasheet).
 * - H: from the FFL when given (H at EFL − FFL from the first vertex, exact); otherwise
 *   placed so that the principal planes are t·(1 − 1/n) apart, the separation of a
 *   singlet of index n and centre thickness t to first order in t for any shape (exact
 *   for a plano lens; Hecht, Optics, 5th ed. 2017, §6.1, thick-lens principal planes,
 *   from memory). n is the material's index, or 1.5 when the material is unknown.
 * - Dispersion: with a known material the power scales with (n(λ) − 1)/(n(λd) − 1), the
 *   thin-lens law; the principal planes stay put. Without one the part is treated as
 *   dispersion-free.
 * - A measured EFL scales the power by f_datasheet(λm) / f_measured.
 * Fails with 'invalid-prescription' on impossible numbers, or with the material errors.
 */
export function blackBoxElement(spec: BlackBoxSpec, wavelengthNm: number): Result<ThickElement> {
	try {
		const { eflMm, bflMm, centerThicknessMm: t } = spec;
		if (!Number.isFinite(eflMm) || eflMm === 0) throw new InvalidPrescriptionError('The EFL must be a non-zero number of mm.');
		if (!Number.isFinite(bflMm)) throw new InvalidPrescriptionError('The BFL must be a number of mm.');
		if (!Number.isFinite(t) || t < 0) throw new InvalidPrescriptionError('The centre thickness must be a number ≥ 0 mm.');
		const ca = spec.clearApertureMm ?? null;
		if (ca !== null && !(ca > 0 && Number.isFinite(ca))) {
			throw new InvalidPrescriptionError('The clear aperture must be a positive number of mm.');
		}
		const material = spec.material ?? null;
		const designNm = spec.designWavelengthNm ?? WAVELENGTH_D_NM;
		const nDesign = material === null ? BLACK_BOX_DEFAULT_INDEX : refractiveIndex(material, designNm);
		const back = bflMm - eflMm;
		const ffl = spec.fflMm ?? null;
		const front = ffl !== null ? eflMm - ffl : t + back - t * (1 - 1 / nDesign);
		const dispersion = (nm: number) =>
			material === null ? 1 : (refractiveIndex(material, nm) - 1) / (nDesign - 1);
		let power = dispersion(wavelengthNm) / eflMm;
		if (spec.measured) {
			const nominalAtMeasured = eflMm / dispersion(spec.measured.wavelengthNm);
			const ratio = nominalAtMeasured / spec.measured.eflMm;
			if (!(ratio > 0) || !Number.isFinite(ratio)) {
				throw new InvalidPrescriptionError(
					`The measured EFL ${spec.measured.eflMm} mm has the opposite sign of the datasheet EFL ${eflMm} mm.`
				);
			}
			power *= ratio;
		}
		return ok({
			kind: 'black-box',
			wavelengthNm,
			matrix: fromPrincipalPlanes(create(), power, front, back),
			thicknessMm: t,
			surfaces: null,
			prescription: null,
			clearApertureMm: ca,
			reversed: false,
			curvatureScale: 1
		});
	} catch (e) {
		if (e instanceof OpticsError) return fail(e);
		throw e;
	}
}
