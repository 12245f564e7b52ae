/**
 * The fundamental mode of a step-index single-mode fibre as a Gaussian beam: its mode field
 * diameter as given on a datasheet, or from the core diameter and NA by Marcuse's fit
 * (D. Marcuse, "Loss analysis of single-mode fiber splices", Bell System Technical Journal 56,
 * 703–718, 1977, eq. 10): w/a = 0.65 + 1.619·V^(−3/2) + 2.879·V^(−6), with V = 2πa·NA/λ.
 * The fit is good to about 1 % for 1.2 ≤ V ≤ 2.4; the fibre carries one mode for V < 2.405
 * (the first zero of J₀). The mode field is a waist (flat wavefront) at the fibre face.
 */

/** Cut-off of the LP11 mode: first zero of the Bessel function J₀ (common practice, no source). */
export const SINGLE_MODE_CUTOFF_V = 2.405;
/** Range of V where Marcuse's fit is used (his paper gives 1.2–2.4 for ~1 % accuracy; we allow down to 0.8, where it is still within a few per cent). */
export const MARCUSE_RANGE_V: readonly [number, number] = [0.8, SINGLE_MODE_CUTOFF_V];

/** Normalised frequency V = π·d·NA/λ of a step-index fibre (d the core diameter, mm; λ in nm). */
export function normalisedFrequency(coreDiameterMm: number, numericalAperture: number, wavelengthNm: number): number {
	return (Math.PI * coreDiameterMm * numericalAperture) / (wavelengthNm * 1e-6);
}

/** Mode field radius over core radius, w/a, by Marcuse's fit (see the module comment). */
export function marcuseRadiusRatio(v: number): number {
	return 0.65 + 1.619 / Math.pow(v, 1.5) + 2.879 / Math.pow(v, 6);
}

/** Why V is outside the fit's range (a sentence for the field), or null when it is fine. */
export function marcuseRangeProblem(v: number, wavelengthNm: number): string | null {
	if (!Number.isFinite(v)) return 'The core diameter and NA do not give a mode field.';
	if (v >= SINGLE_MODE_CUTOFF_V) {
		return `At ${wavelengthNm} nm this fibre has V = ${v.toFixed(2)} ≥ ${SINGLE_MODE_CUTOFF_V}: it carries more than one mode, so it has no single mode field to match.`;
	}
	if (v < MARCUSE_RANGE_V[0]) {
		return `At ${wavelengthNm} nm this fibre has V = ${v.toFixed(2)}, too weakly guiding for Marcuse's mode field estimate: give the mode field diameter instead.`;
	}
	return null;
}

/** A fibre as given: the mode field diameter, or core diameter and NA. */
export type FibreSpec = { modeFieldDiameterMm: number } | { coreDiameterMm: number; numericalAperture: number };

/** Mode field diameter (1/e² intensity, mm) of a fibre at `wavelengthNm`; null when V is outside the fit's range. */
export function modeFieldDiameterMm(fibre: FibreSpec, wavelengthNm: number): number | null {
	if ('modeFieldDiameterMm' in fibre) return fibre.modeFieldDiameterMm > 0 ? fibre.modeFieldDiameterMm : null;
	const v = normalisedFrequency(fibre.coreDiameterMm, fibre.numericalAperture, wavelengthNm);
	if (marcuseRangeProblem(v, wavelengthNm) !== null) return null;
	return fibre.coreDiameterMm * marcuseRadiusRatio(v);
}
