/**
 * The imaging solver kernels: where one element, or an ordered pair of elements, must
 * stand so that an object plane is imaged onto a target plane a track L away.
 *
 * Both kernels read elements from a snapshot (`snapshot.ts`), write roots into a
 * caller-owned Float64Array (ROOT_STRIDE numbers per root) and return how many they
 * wrote. They allocate nothing and never throw; flags say what kind of root each is.
 *
 * Geometry, all in air, distances in mm along +z from the object plane:
 *   object plane → s → element 1 (thickness t₁) → gap g → element 2 (t₂) → d → target
 * with s + t₁ + g + t₂ + d = L. s is the object (working) distance, g the vertex gap,
 * d the back (working) distance. For one element there is no g.
 */
import {
	ELEMENT_STRIDE,
	EL_A,
	EL_B,
	EL_C,
	EL_D,
	EL_THICKNESS
} from './snapshot';

/** Numbers per root in a kernel's output buffer. */
export const ROOT_STRIDE = 6;
/** Offset of the object distance s (object plane to first vertex), mm. */
export const ROOT_OBJECT_DISTANCE = 0;
/** Offset of the vertex gap g between the two elements, mm (0 for a single element). */
export const ROOT_GAP = 1;
/** Offset of the back distance d (last vertex to target plane), mm. */
export const ROOT_BACK_DISTANCE = 2;
/** Offset of the magnification achieved, from the full matrix. */
export const ROOT_MAGNIFICATION = 3;
/** Offset of the root's flags (a sum of ROOT_* bits, stored as a number). */
export const ROOT_FLAGS = 4;
/** Offset of |B| of the full object-to-target matrix, mm (0 for an exact image). */
export const ROOT_RESIDUAL = 5;

/** Two roots merged into one (the gap equation touches zero; happens at m = ±1). */
export const ROOT_DOUBLE = 1;
/**
 * The configuration is afocal (system C = 0) and images at every object distance with
 * s + d fixed: a one-parameter family. The root written is its symmetric member s = d.
 */
export const ROOT_FAMILY = 2;
/** s < 0: the object would have to sit behind the first vertex (virtual object). */
export const ROOT_VIRTUAL_OBJECT = 4;
/** g < 0: the elements would overlap. */
export const ROOT_NEGATIVE_GAP = 8;
/** d < 0: the image forms before the last vertex (virtual image). */
export const ROOT_NEGATIVE_BACK = 16;
/** The full matrix check failed (|B| or A − m above tolerance); do not use the root. */
export const ROOT_UNVERIFIED = 32;

/** Bits that make a root non-physical before any aperture or gap limit is applied. */
export const ROOT_NON_PHYSICAL = ROOT_VIRTUAL_OBJECT | ROOT_NEGATIVE_GAP | ROOT_NEGATIVE_BACK | ROOT_UNVERIFIED;

/** Relative tolerance of the full-matrix verification. */
const VERIFY_TOL = 1e-9;
/** Relative size of a discriminant treated as zero (roots closer than ~1e-6 of the scale merge). */
const DOUBLE_TOL = 1e-12;
/** |C|·length below this (dimensionless) counts as afocal at a root. */
const AFOCAL_TOL = 1e-10;

/**
 * Single element i of `snapshot`: the object distances s that image the object plane
 * onto the target plane `trackMm` away (up to two), with d = L − t − s.
 *
 * With M = T(d)·E·T(s), B = 0 and d = L − t − s give c·s² + (D − a − Λc)·s − (b + ΛD) = 0,
 * Λ = L − t; the magnification is 1/(c·s + D). The two roots are conjugate (their
 * magnifications multiply to 1) and merge into a double root at m = −1, L' = 4f.
 * An afocal element (c = 0) gives the linear case with magnification 1/D; a window
 * that images for every s is returned as a family at s = d.
 * Writes up to two roots at `out[offset…]`, returns the count (0 when none is real).
 */
export function solveSingleKernel(
	snapshot: Float64Array,
	i: number,
	trackMm: number,
	out: Float64Array,
	offset: number
): number {
	const o = i * ELEMENT_STRIDE;
	const a = snapshot[o + EL_A],
		b = snapshot[o + EL_B],
		c = snapshot[o + EL_C],
		dd = snapshot[o + EL_D];
	const lam = trackMm - snapshot[o + EL_THICKNESS];
	const qa = c,
		qb = dd - a - lam * c,
		qc = -(b + lam * dd);
	const scaleB = Math.abs(dd) + Math.abs(a) + Math.abs(lam * c);
	const scaleC = Math.abs(b) + Math.abs(lam * dd);
	const kind = solveQuadratic(qa, qb, qc, scaleB, scaleC);
	if (kind === QUAD_NONE) return 0;
	if (kind === QUAD_ALL) {
		return writeSingle(out, offset, a, b, c, dd, lam, lam / 2, ROOT_FAMILY);
	}
	let n = writeSingle(out, offset, a, b, c, dd, lam, quadRoots[0], kind === QUAD_DOUBLE ? ROOT_DOUBLE : 0);
	if (kind === QUAD_TWO) n += writeSingle(out, offset + n * ROOT_STRIDE, a, b, c, dd, lam, quadRoots[1], 0);
	return n;
}

function writeSingle(
	out: Float64Array,
	offset: number,
	a: number,
	b: number,
	c: number,
	dd: number,
	lam: number,
	s: number,
	flags: number
): number {
	const mD = c * s + dd;
	if (!(Math.abs(mD) > 1e-15)) return 0; // image at infinity: no finite conjugate
	const d = lam - s;
	const mA = a + d * c;
	const mB = a * s + b + d * mD;
	const m = 1 / mD;
	if (s < 0) flags |= ROOT_VIRTUAL_OBJECT;
	if (d < 0) flags |= ROOT_NEGATIVE_BACK;
	const tolB = VERIFY_TOL * (Math.abs(a * s) + Math.abs(b) + Math.abs(d * mD) + 1e-3);
	if (!(Math.abs(mB) <= tolB) || !(Math.abs(mA - m) <= VERIFY_TOL * Math.max(1, Math.abs(m)))) {
		flags |= ROOT_UNVERIFIED;
	}
	out[offset + ROOT_OBJECT_DISTANCE] = s;
	out[offset + ROOT_GAP] = 0;
	out[offset + ROOT_BACK_DISTANCE] = d;
	out[offset + ROOT_MAGNIFICATION] = mA;
	out[offset + ROOT_FLAGS] = flags;
	out[offset + ROOT_RESIDUAL] = Math.abs(mB);
	return 1;
}

/**
 * Ordered pair (i then j) of `snapshot`: every (s, g, d) that images the object plane
 * onto the target plane `trackMm` away with magnification exactly `magnification`.
 *
 * Closed form: with K(g) = E₂·T(g)·E₁ = [[A₀ + gA₁, B], [C₀ + gC₁, D₀ + gD₁]] and the
 * full matrix T(d)·K·T(s), D_full = 1/m and A_full = m give s = (1/m − D)/C and
 * d = (m − A)/C (then B_full = 0 follows from det = 1), and the track gives
 *   C₁g² + (C₀ − A₁ − D₁ − C₁Λ)·g + (m + 1/m − A₀ − D₀ − C₀Λ) = 0,  Λ = L − t₁ − t₂,
 * a quadratic in g that depends on m only through m + 1/m (so m and 1/m share gaps and
 * swap s and d). At m = ±1, m + 1/m is extremal and the two roots can merge: the
 * discriminant is tested against its rounding scale, so the double root is found
 * exactly where a sign-change scan would miss it.
 *
 * Where C(g) = 0 at a root the pair is afocal and s, d above are 0/0. Then A·D = 1 and
 * the pair images iff A = m: for m ≠ ±1 the unique placement follows from
 * m·s + B + d/m = 0 and s + d = Λ − g; for m = ±1 it images for every s when
 * m·(Λ − g) + B = 0 (e.g. two equal lenses 2f apart at m = −1 over 4f) and the
 * symmetric member s = d is written, flagged ROOT_FAMILY; otherwise there is no root.
 * Every root is checked with its full matrix (ROOT_UNVERIFIED when the check fails).
 * Writes up to two roots at `out[offset…]`; returns the count. m must be finite, ≠ 0.
 */
export function solvePairKernel(
	snapshot: Float64Array,
	i: number,
	j: number,
	trackMm: number,
	magnification: number,
	out: Float64Array,
	offset: number
): number {
	const o1 = i * ELEMENT_STRIDE,
		o2 = j * ELEMENT_STRIDE;
	const a1 = snapshot[o1 + EL_A],
		b1 = snapshot[o1 + EL_B],
		c1 = snapshot[o1 + EL_C],
		d1 = snapshot[o1 + EL_D];
	const a2 = snapshot[o2 + EL_A],
		b2 = snapshot[o2 + EL_B],
		c2 = snapshot[o2 + EL_C],
		d2 = snapshot[o2 + EL_D];
	const m = magnification;
	const lam = trackMm - snapshot[o1 + EL_THICKNESS] - snapshot[o2 + EL_THICKNESS];
	const mu = m + 1 / m;
	const A0 = a2 * a1 + b2 * c1,
		A1 = a2 * c1;
	const C0 = c2 * a1 + d2 * c1,
		C1 = c2 * c1;
	const D0 = c2 * b1 + d2 * d1,
		D1 = c2 * d1;
	const qb = C0 - A1 - D1 - C1 * lam;
	const qc = mu - A0 - D0 - C0 * lam;
	const scaleB = Math.abs(C0) + Math.abs(A1) + Math.abs(D1) + Math.abs(C1 * lam);
	const scaleC = Math.abs(mu) + Math.abs(A0) + Math.abs(D0) + Math.abs(C0 * lam);
	const kind = solveQuadratic(C1, qb, qc, scaleB, scaleC);
	if (kind === QUAD_NONE || kind === QUAD_ALL) return 0; // QUAD_ALL needs two afocal parts
	const g0 = quadRoots[0],
		g1 = quadRoots[1];
	const flags0 = kind === QUAD_DOUBLE ? ROOT_DOUBLE : 0;
	let n = writePair(out, offset, a1, b1, c1, d1, a2, b2, c2, d2, lam, m, g0, flags0);
	if (kind === QUAD_TWO) n += writePair(out, offset + n * ROOT_STRIDE, a1, b1, c1, d1, a2, b2, c2, d2, lam, m, g1, 0);
	return n;
}

function writePair(
	out: Float64Array,
	offset: number,
	a1: number,
	b1: number,
	c1: number,
	d1: number,
	a2: number,
	b2: number,
	c2: number,
	d2: number,
	lam: number,
	m: number,
	g: number,
	flags: number
): number {
	// K(g) = E2 · T(g) · E1
	const ta = a1 + g * c1,
		tb = b1 + g * d1;
	const kA = a2 * ta + b2 * c1,
		kB = a2 * tb + b2 * d1,
		kC = c2 * ta + d2 * c1,
		kD = c2 * tb + d2 * d1;
	const sum = lam - g; // s + d
	let s: number, d: number;
	if (Math.abs(kC) * (Math.abs(sum) + Math.abs(kB) + 1e-3) <= AFOCAL_TOL) {
		// Afocal at this gap: images only when A = m.
		const im = 1 / m;
		if (Math.abs(kA - m) > Math.abs(kA - im) + 1e-12) return 0; // A = 1/m ≠ m: no finite conjugate
		const split = m - im;
		if (Math.abs(split) > 1e-9) {
			s = (-kB - sum * im) / split;
			d = sum - s;
		} else {
			if (!(Math.abs(m * sum + kB) <= VERIFY_TOL * (Math.abs(sum) + Math.abs(kB) + 1e-3) * 10)) return 0;
			s = sum / 2;
			d = s;
			flags |= ROOT_FAMILY;
		}
	} else {
		s = (1 / m - kD) / kC;
		d = (m - kA) / kC;
	}
	// Full matrix T(d) · K · T(s).
	const fD = kC * s + kD;
	const fA = kA + d * kC;
	const fB = kA * s + kB + d * fD;
	if (s < 0) flags |= ROOT_VIRTUAL_OBJECT;
	if (g < 0) flags |= ROOT_NEGATIVE_GAP;
	if (d < 0) flags |= ROOT_NEGATIVE_BACK;
	const tolB = VERIFY_TOL * (Math.abs(kA * s) + Math.abs(kB) + Math.abs(d * fD) + 1e-3);
	if (
		!(Math.abs(fB) <= tolB) ||
		!(Math.abs(fA - m) <= VERIFY_TOL * Math.max(1, Math.abs(m))) ||
		!(Math.abs(s + d + g - lam) <= VERIFY_TOL * (Math.abs(s) + Math.abs(d) + Math.abs(g) + Math.abs(lam) + 1e-3))
	) {
		flags |= ROOT_UNVERIFIED;
	}
	out[offset + ROOT_OBJECT_DISTANCE] = s;
	out[offset + ROOT_GAP] = g;
	out[offset + ROOT_BACK_DISTANCE] = d;
	out[offset + ROOT_MAGNIFICATION] = fA;
	out[offset + ROOT_FLAGS] = flags;
	out[offset + ROOT_RESIDUAL] = Math.abs(fB);
	return 1;
}

const QUAD_NONE = 0,
	QUAD_ONE = 1,
	QUAD_TWO = 2,
	QUAD_DOUBLE = 3,
	QUAD_ALL = 4;

/** Scratch for the roots of `solveQuadratic` (module-level: the kernels allocate nothing). */
const quadRoots = new Float64Array(2);

/**
 * Real roots of α·x² + β·x + γ = 0 into `quadRoots`, by the cancellation-free form
 * q = −(β + sign(β)·√Δ)/2, x = q/α and γ/q. `scaleB` and `scaleC` are the magnitudes of
 * the terms β and γ were summed from: they set the rounding noise, so a discriminant
 * within that noise of zero is a double root and a β, γ within it of zero are zero.
 */
function solveQuadratic(alpha: number, beta: number, gamma: number, scaleB: number, scaleC: number): number {
	const noiseB = DOUBLE_TOL * scaleB;
	const noiseC = DOUBLE_TOL * scaleC;
	if (alpha === 0) {
		if (Math.abs(beta) <= noiseB) return Math.abs(gamma) <= noiseC ? QUAD_ALL : QUAD_NONE;
		quadRoots[0] = -gamma / beta;
		return QUAD_ONE;
	}
	const disc = beta * beta - 4 * alpha * gamma;
	const noise = DOUBLE_TOL * (scaleB * scaleB + 4 * Math.abs(alpha) * scaleC);
	if (disc < -noise) return QUAD_NONE;
	if (disc <= noise) {
		quadRoots[0] = -beta / (2 * alpha);
		return QUAD_DOUBLE;
	}
	const q = -0.5 * (beta + (beta >= 0 ? Math.sqrt(disc) : -Math.sqrt(disc)));
	const r0 = q / alpha;
	const r1 = gamma / q;
	if (r0 <= r1) {
		quadRoots[0] = r0;
		quadRoots[1] = r1;
	} else {
		quadRoots[0] = r1;
		quadRoots[1] = r0;
	}
	return QUAD_TWO;
}
