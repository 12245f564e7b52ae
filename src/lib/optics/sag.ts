/**
 * Sag of spherical surfaces: how far the surface at height y lies from the plane of its
 * vertex, along +z. Used for edge thickness, for the "surfaces must not touch" check of
 * the solver and for drawing.
 */

/**
 * Sag z(y) in mm of a sphere of curvature `curvaturePerMm` (1/R, 0 for flat) at height
 * `heightMm`: z = c·y² / (1 + √(1 − c²y²)), the form that stays exact for flat and
 * nearly flat surfaces. Positive when the surface bends towards +z (R > 0). Returns null
 * when |c·y| > 1: the sphere does not reach that height.
 */
export function sagMm(curvaturePerMm: number, heightMm: number): number | null {
	const cy = curvaturePerMm * heightMm;
	const q = 1 - cy * cy;
	if (q < 0) return null;
	return (cy * heightMm) / (1 + Math.sqrt(q));
}

/** `sagMm` from a radius (null = flat). */
export function sagFromRadiusMm(radiusMm: number | null, heightMm: number): number | null {
	return sagMm(radiusMm === null ? 0 : 1 / radiusMm, heightMm);
}

/**
 * Smallest axial distance, across heights 0..`heightMm`, between a surface of curvature
 * `c1` with its vertex at z = 0 and a surface of curvature `c2` with its vertex at
 * z = `vertexGapMm` (the second to the right of the first): min over y of
 * gap + sag2(y) − sag1(y). Null when either sphere does not reach `heightMm`.
 *
 * Why only the two ends are checked: d(sag)/d(y²) = sign(c)/(2√(R² − y²)), so the
 * derivative of sag2 − sag1 in y² keeps one sign over the whole range (if the signs of
 * c1 and c2 differ it is the sign of c2; if they agree, the smaller |R| dominates
 * everywhere, or the two cancel exactly). The gap is therefore monotone in y and its
 * minimum lies at y = 0 or at y = heightMm. This makes the test exact and free of
 * sampling.
 */
export function minAirGapMm(c1: number, c2: number, vertexGapMm: number, heightMm: number): number | null {
	const s1 = sagMm(c1, heightMm);
	const s2 = sagMm(c2, heightMm);
	if (s1 === null || s2 === null) return null;
	return Math.min(vertexGapMm, vertexGapMm + s2 - s1);
}
