/**
 * The wavelength band of the colour figures. Fraunhofer lines F (486.1 nm, hydrogen),
 * d (587.6 nm, helium) and C (656.3 nm, hydrogen): the band of the Abbe number
 * V = (n_d − 1)/(n_F − n_C) (common practice, no source).
 */

/** A band as [shortest, centre, longest] wavelength, nm. */
export type ColourBand = readonly [number, number, number];

/** The F, d and C lines, nm. */
export const FDC_BAND_NM: ColourBand = [486.1, 587.6, 656.3];

/**
 * The default band of a question at `wavelengthNm`: F–d–C when the wavelength lies within
 * it (the visible); otherwise the same band scaled by λ/587.6 (the same relative width, about
 * ±15 %, around the working wavelength), so that a near-infrared or ultraviolet question gets
 * colour figures of comparable meaning. A coating band, when a part states one, is another
 * choice; callers pass their band to the evaluation.
 */
export function defaultColourBand(wavelengthNm: number): ColourBand {
	const [f, d, c] = FDC_BAND_NM;
	if (wavelengthNm >= f && wavelengthNm <= c) return FDC_BAND_NM;
	const k = wavelengthNm / d;
	return [Math.round(f * k * 10) / 10, wavelengthNm, Math.round(c * k * 10) / 10];
}

/**
 * The band of the colour figures for parts with coating bands: F–d–C in the visible (as `defaultColourBand`); outside it
 * the band every part's coating covers (their common range) when it holds the working wavelength and is wider than
 * 1 % of it, else `defaultColourBand`. A part without a band, or bands without a common range, leave the default.
 */
export function colourBandFor(wavelengthNm: number, coatingBandsNm: readonly ({ minNm: number; maxNm: number } | null | undefined)[]): ColourBand {
	const fallback = defaultColourBand(wavelengthNm);
	if (fallback === FDC_BAND_NM || !coatingBandsNm.length) return fallback;
	let lo = -Infinity,
		hi = Infinity;
	for (const b of coatingBandsNm) {
		if (!b) return fallback;
		lo = Math.max(lo, b.minNm);
		hi = Math.min(hi, b.maxNm);
	}
	if (!(lo <= wavelengthNm && wavelengthNm <= hi) || hi - lo < 0.01 * wavelengthNm) return fallback;
	return [lo, wavelengthNm, hi];
}
