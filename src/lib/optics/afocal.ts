/**
 * Two parts made afocal: the vertex gap g at which M = M₂·T(g)·M₁ has C = 0 (a collimated beam
 * leaves collimated), from the thick matrices at the working wavelength:
 *   C = C₂(A₁ + g·C₁) + D₂·C₁ = 0  ⇒  g = −(C₂A₁ + D₂C₁)/(C₁C₂).
 * For thin lenses this is f₁ + f₂ (common practice, no source). The beam diameter then scales by
 * A = A₂(A₁ + gC₁) + B₂C₁ (negative: turned upside down, a real focus between the parts).
 */

/** The afocal vertex gap of part 1 (A₁..D₁) then part 2 (A₂..D₂), mm; null when either part has no power. */
export function afocalGapMm(a1: number, _b1: number, c1: number, d1: number, _a2: number, _b2: number, c2: number, d2: number): number | null {
	if (!(Math.abs(c1) > 1e-15) || !(Math.abs(c2) > 1e-15)) return null;
	return -(c2 * a1 + d2 * c1) / (c1 * c2);
}

/** A of the pair at vertex gap g: the signed beam expansion when the pair is afocal. */
export function pairA(a1: number, b1: number, c1: number, d1: number, a2: number, b2: number, gapMm: number): number {
	void b1;
	void d1;
	return a2 * (a1 + gapMm * c1) + b2 * c1;
}

/**
 * Where a ray parallel to the axis crosses it after part 1, measured from part 1's last vertex
 * (mm): −A₁/C₁. A real focus between the parts lies in (0, gap).
 */
export function focusAfterMm(a1: number, c1: number): number | null {
	return Math.abs(c1) > 1e-15 ? -a1 / c1 : null;
}
