/**
 * Every numerical tolerance of the optics core and the solver's checks, in one place. These are
 * rounding allowances of the arithmetic (double precision), not rules of the product: those live
 * beside the ranking (`solver/ranking.ts`: VIGNETTING_TOLERANCE, EDGE_BLOCKED_RATIO, …).
 * Imports nothing.
 */

/** Relative tolerance of the kernels' full-matrix verification of a root (B ≈ 0, A ≈ m, lengths add up). */
export const VERIFY_TOL = 1e-9;
/** Relative size of a discriminant treated as zero (roots closer than ~1e-6 of the scale merge). */
export const DOUBLE_TOL = 1e-12;
/** |C|·length below this (dimensionless) counts as afocal at a root. */
export const AFOCAL_TOL = 1e-10;
/** Relative size of |p(x)| against its terms below which a polynomial's critical point counts as a (double) root. */
export const TOUCH_TOL = 1e-11;
/**
 * How far behind its start a surface hit may lie and still count as ahead, mm: rounding only
 * (a ray starting on a surface and meeting the next one at the same point, e.g. a cemented rim).
 */
export const BEHIND_TOL_MM = 1e-9;
/** The evaluation's independent matrix check of an answer: |B| in mm. */
export const VERIFY_B_TOL_MM = 1e-6;
/** The evaluation's independent matrix check of an answer: |A − m| relative to max(1, |A|). */
export const VERIFY_A_TOL = 1e-6;
