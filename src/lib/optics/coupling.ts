/**
 * Power coupling (overlap) of two fundamental Gaussian beams of the same wavelength and
 * axis: the fraction of one beam's power carried into the other's mode,
 * η = |∫u₁u₂*|² / (∫|u₁|²·∫|u₂|²).
 *
 * For a waist-size mismatch and an axial offset Δz between the waists (W. B. Joyce and
 * B. C. DeLoach, "Alignment of Gaussian beams", Applied Optics 23, 4187–4196, 1984, eq. for
 * longitudinal offset, written from memory):
 *   η = 4 / [ (w₁/w₂ + w₂/w₁)² + (λΔz / (π w₁ w₂))² ].
 * In beam parameters at any one common plane, q₁ = z₁ + i·z_R1 and q₂ = z₂ + i·z_R2
 * (the same formula: z_R = πw²/λ), η = 4·z_R1·z_R2 / ((z₁ − z₂)² + (z_R1 + z_R2)²); it is
 * the same at every plane, since a lossless ABCD system keeps the overlap.
 */

/** Overlap of two beams given by their q at one common plane (mm). */
export function overlapFromQ(q1re: number, q1im: number, q2re: number, q2im: number): number {
	const dz = q1re - q2re,
		s = q1im + q2im;
	return (4 * q1im * q2im) / (dz * dz + s * s);
}

/** Overlap of two beams by waist radii w₁, w₂ (mm) and the axial distance between their waists (mm), at λ (nm). */
export function couplingEfficiency(waist1RadiusMm: number, waist2RadiusMm: number, waistOffsetMm: number, wavelengthNm: number): number {
	const r = waist1RadiusMm / waist2RadiusMm + waist2RadiusMm / waist1RadiusMm;
	const x = (wavelengthNm * 1e-6 * waistOffsetMm) / (Math.PI * waist1RadiusMm * waist2RadiusMm);
	return 4 / (r * r + x * x);
}
