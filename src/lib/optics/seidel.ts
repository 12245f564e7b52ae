/**
 * Third-order (Seidel) spherical aberration of a thin lens from its shape and position
 * factors: a cheap screen before a real trace.
 *
 * Formula (thin lens in air, stop at the lens, ray height h at the lens):
 *   1/s'ₕ − 1/s'ₚ = h²/(8 f³) · 1/(n(n − 1)) ·
 *                   [ (n + 2)/(n − 1)·q² + 4(n + 1)·p·q + (3n + 2)(n − 1)·p² + n³/(n − 1) ]
 * with q = (R₂ + R₁)/(R₂ − R₁) the shape (Coddington) factor and p = (s' − s)/(s' + s)
 * the position factor (s object distance, + for a real object on the left; s' image
 * distance, + for a real image on the right; collimated input: p = −1).
 * Source: F. A. Jenkins and H. E. White, Fundamentals of Optics, 4th ed. (1976),
 * ch. 9, "Spherical aberration of a thin lens" (from memory; the sign and size are
 * checked against real rays in tests/unit/optics/seidel.test.ts). It gives the known
 * best shape q = −2(n² − 1)p/(n + 2), ≈ +0.71 for n = 1.5 and collimated light.
 */

/**
 * Coddington shape factor q = (R₂ + R₁)/(R₂ − R₁) = (c₁ + c₂)/(c₁ − c₂), radii in mm
 * (null = flat). +1: plano-convex with the curved side first; −1: curved side last;
 * 0: equiconvex. Null when c₁ = c₂ (the lens has no power to first order).
 */
export function shapeFactor(r1Mm: number | null, r2Mm: number | null): number | null {
	const c1 = r1Mm === null ? 0 : 1 / r1Mm;
	const c2 = r2Mm === null ? 0 : 1 / r2Mm;
	if (c1 === c2) return null;
	return (c1 + c2) / (c1 - c2);
}

/**
 * Position (conjugate) factor p = (s' − s)/(s' + s) from the signed magnification of a
 * thin lens, m = −s'/s: p = −(1 + m)/(1 − m). Collimated input (m = 0): −1; symmetric
 * 1:1 imaging (m = −1): 0. Null for m = 1 (object and image both at the lens).
 */
export function positionFactor(magnification: number): number | null {
	if (magnification === 1) return null;
	return -(1 + magnification) / (1 - magnification);
}

/** Inputs of `thinLensSpherical`. */
export interface ThinLensSphericalInput {
	/** Refractive index of the lens at the working wavelength. */
	readonly index: number;
	/** Shape factor q (`shapeFactor`). */
	readonly shapeFactor: number;
	/** Position factor p (`positionFactor`). */
	readonly positionFactor: number;
	/** Focal length, mm. */
	readonly eflMm: number;
	/** Paraxial image distance s' from the lens, mm (f for collimated input). */
	readonly imageDistanceMm: number;
	/** Height of the ray at the lens, mm (the marginal ray for the spot). */
	readonly rayHeightMm: number;
}

/** Third-order spherical aberration of one ray zone. */
export interface ThinLensSpherical {
	/** 1/s'ₕ − 1/s'ₚ, 1/mm (positive: undercorrected, the zone focuses short). */
	readonly inverseFocusShiftPerMm: number;
	/** Longitudinal aberration s'ₚ − s'ₕ ≈ s'²·(1/s'ₕ − 1/s'ₚ), mm. */
	readonly longitudinalMm: number;
	/** Transverse aberration at the paraxial image plane ≈ longitudinal·h/s', mm. */
	readonly transverseMm: number;
}

/** Third-order spherical aberration of a thin lens (see the formula above). */
export function thinLensSpherical(input: ThinLensSphericalInput): ThinLensSpherical {
	const { index: n, shapeFactor: q, positionFactor: p, eflMm: f, imageDistanceMm: si, rayHeightMm: h } = input;
	const bracket = ((n + 2) / (n - 1)) * q * q + 4 * (n + 1) * p * q + (3 * n + 2) * (n - 1) * p * p + (n * n * n) / (n - 1);
	const inverse = ((h * h) / (8 * f * f * f)) * (bracket / (n * (n - 1)));
	const longitudinal = si * si * inverse;
	return { inverseFocusShiftPerMm: inverse, longitudinalMm: longitudinal, transverseMm: (longitudinal * h) / si };
}

/** The shape factor with the least third-order spherical aberration, q = −2(n² − 1)p/(n + 2). */
export function bestShapeFactor(index: number, positionFactorValue: number): number {
	return (-2 * (index * index - 1) * positionFactorValue) / (index + 2);
}
