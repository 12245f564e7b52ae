/**
 * Number wording of the solver's figures (setup figures, build sheet): matrix entries without
 * rounding noise, percentages, and where the sharp image goes when an EFL is off.
 */

/**
 * Entries smaller than this fraction of their natural scale are rounding noise of a product of
 * matrices (double precision leaves about 1e-16 relative per operation): shown as 0. 1e-9 is far
 * below anything a bench can set and far above the noise (common practice, no source).
 */
export const MATRIX_ZERO_FRACTION = 1e-9;

/**
 * A matrix entry with `significant` digits, in plain decimals for magnitudes from 1e-4 to 1e7
 * (scientific form only outside that range). `scale` is the entry's natural size in its own unit
 * (1 for A and D, the track length for B in mm, 1 / track for C in 1/mm): an entry below
 * MATRIX_ZERO_FRACTION of it prints as "0".
 */
export function matrixEntry(value: number, scale = 1, significant = 6): string {
	if (!Number.isFinite(value)) return '–';
	const size = Math.abs(value);
	if (size <= MATRIX_ZERO_FRACTION * Math.abs(scale) || size === 0) return '0';
	if (size < 1e-4 || size >= 1e7) {
		const [mantissa, exponent] = value.toExponential(significant - 1).split('e');
		return `${mantissa} × 10^${Number(exponent)}`;
	}
	const decimals = Math.max(0, significant - 1 - Math.floor(Math.log10(size)));
	return value.toFixed(Math.min(decimals, 12));
}

/** A relative deviation as a percentage with two significant digits: 0.01 → "1", 0.0037 → "0.37". */
export function percent(relative: number): string {
	return String(Number((relative * 100).toPrecision(2)));
}

/** Shifts smaller than this are shown as "stays at the target plane", mm (the figures show 0.01 mm). */
export const SHIFT_NEGLIGIBLE_MM = 0.005;

/**
 * Where the sharp image lies relative to the target plane, for a shift measured along the
 * light (+z): positive is beyond the target plane, away from the lens; negative is between the
 * last part and the target plane, toward the lens.
 */
export function imageShiftText(shiftMm: number | null): string {
	if (shiftMm === null || !Number.isFinite(shiftMm)) return 'goes to infinity (no sharp image at a finite distance)';
	if (Math.abs(shiftMm) < SHIFT_NEGLIGIBLE_MM) return 'stays at the target plane';
	const d = Math.abs(shiftMm).toFixed(2);
	return shiftMm > 0 ? `moves ${d} mm away from the lens (beyond the target plane)` : `moves ${d} mm toward the lens (in front of the target plane)`;
}
