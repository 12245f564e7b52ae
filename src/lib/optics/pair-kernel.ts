/**
 * The pair imaging kernel: every placement of an ordered pair of elements that images
 * an object plane onto a target plane a track L away at an exact magnification. Reads
 * the snapshot (`snapshot.ts`), writes roots laid out as in `roots.ts` into a
 * caller-owned Float64Array, allocates nothing and never throws. This is the solver's
 * inner loop (see tests/bench/optics-pair-kernel.ts).
 */
import { ELEMENT_STRIDE, EL_A, EL_B, EL_C, EL_D, EL_THICKNESS } from './snapshot';
import {
	ROOT_STRIDE,
	ROOT_OBJECT_DISTANCE,
	ROOT_GAP,
	ROOT_BACK_DISTANCE,
	ROOT_MAGNIFICATION,
	ROOT_FLAGS,
	ROOT_RESIDUAL,
	ROOT_DOUBLE,
	ROOT_FAMILY,
	ROOT_VIRTUAL_OBJECT,
	ROOT_NEGATIVE_GAP,
	ROOT_NEGATIVE_BACK,
	ROOT_UNVERIFIED
} from './roots';
import { VERIFY_TOL, AFOCAL_TOL, QUAD_ONE, quadRoots, solveQuadratic } from './quadratic';

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
	// Literal offsets (ELEMENT_STRIDE = 13, A B C D thickness first; asserted at load
	// below): imported bindings are not constant-folded in the hot loop.
	const o1 = i * 13,
		o2 = j * 13;
	const a1 = snapshot[o1],
		b1 = snapshot[o1 + 1],
		c1 = snapshot[o1 + 2],
		d1 = snapshot[o1 + 3];
	const a2 = snapshot[o2],
		b2 = snapshot[o2 + 1],
		c2 = snapshot[o2 + 2],
		d2 = snapshot[o2 + 3];
	const m = magnification;
	const lam = trackMm - snapshot[o1 + 4] - snapshot[o2 + 4];
	const im = 1 / m;
	const mu = m + im;
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
	if (C1 === 0) {
		// One part has no power: the gap equation is linear (rare; not the hot path).
		const kind = solveQuadratic(0, qb, qc, scaleB, scaleC);
		if (kind !== QUAD_ONE) return 0; // QUAD_ALL needs two afocal parts
		return writePair(out, offset, a1, b1, c1, d1, a2, b2, c2, d2, lam, m, quadRoots[0], 0);
	}
	const disc = qb * qb - 4 * C1 * qc;
	// The sign first: most pairs with no real root leave on it; the rounding noise only
	// tells them from a double root (measured alternating: faster than one test on -noise).
	if (disc < 0) {
		const noise = 1e-12 * /* DOUBLE_TOL */ (scaleB * scaleB + 4 * Math.abs(C1) * scaleC);
		if (disc < -noise) return 0;
		return writePair(out, offset, a1, b1, c1, d1, a2, b2, c2, d2, lam, m, -qb / (2 * C1), ROOT_DOUBLE);
	}
	const noise = 1e-12 * /* DOUBLE_TOL */ (scaleB * scaleB + 4 * Math.abs(C1) * scaleC);
	if (disc <= noise) return writePair(out, offset, a1, b1, c1, d1, a2, b2, c2, d2, lam, m, -qb / (2 * C1), ROOT_DOUBLE);
	// Two distinct roots, cancellation-free: q = −(β + sign(β)√Δ)/2, g = q/α and γ/q.
	// The loop below is the hot path, written out in one function on purpose (calls with
	// many arguments are not inlined and cost half the speed); it does what writePair
	// and writeVerified do, and hands the rare afocal root to writePair.
	const sq = Math.sqrt(disc);
	const q = -0.5 * (qb + (qb >= 0 ? sq : -sq));
	const r0 = q / C1,
		r1 = qc / q;
	const absM = m < 0 ? -m : m;
	const tolA = 1e-9 * (absM > 1 ? absM : 1);
	let n = 0;
	for (let r = 0; r < 2; r++) {
		const g = r === 0 ? (r0 < r1 ? r0 : r1) : r0 < r1 ? r1 : r0;
		const o = offset + n * 6; // ROOT_STRIDE
		const ta = a1 + g * c1,
			tb = b1 + g * d1;
		const kA = a2 * ta + b2 * c1,
			kB = a2 * tb + b2 * d1,
			kC = c2 * ta + d2 * c1,
			kD = c2 * tb + d2 * d1;
		const sum = lam - g;
		if (Math.abs(kC) * (Math.abs(sum) + Math.abs(kB) + 1e-3) <= 1e-10 /* AFOCAL_TOL */) {
			n += writeAfocal(out, o, kA, kB, kC, kD, sum, lam, m, g, 0);
			continue;
		}
		const ic = 1 / kC;
		const s = (im - kD) * ic;
		const d = (m - kA) * ic;
		// Full matrix T(d)·K·T(s).
		const fD = kC * s + kD;
		const fA = kA + d * kC;
		const fB = kA * s + kB + d * fD;
		let flags = 0;
		if (s < 0) flags |= 4; // ROOT_VIRTUAL_OBJECT
		if (g < 0) flags |= 8; // ROOT_NEGATIVE_GAP
		if (d < 0) flags |= 16; // ROOT_NEGATIVE_BACK
		const absB = Math.abs(fB);
		if (
			!(absB <= 1e-9 * (Math.abs(kA * s) + Math.abs(kB) + Math.abs(d * fD) + 1e-3)) ||
			!(Math.abs(fA - m) <= tolA) ||
			!(Math.abs(s + d + g - lam) <= 1e-9 * (Math.abs(s) + Math.abs(d) + Math.abs(g) + Math.abs(lam) + 1e-3))
		) {
			flags |= 32; // ROOT_UNVERIFIED
		}
		out[o] = s;
		out[o + 1] = g;
		out[o + 2] = d;
		out[o + 3] = fA;
		out[o + 4] = flags;
		out[o + 5] = absB;
		n++;
	}
	return n;
}

/** Writes the root at gap g (computing s, d and the full-matrix check); returns 0 or 1. */
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
	if (Math.abs(kC) * (Math.abs(sum) + Math.abs(kB) + 1e-3) <= AFOCAL_TOL) {
		return writeAfocal(out, offset, kA, kB, kC, kD, sum, lam, m, g, flags);
	}
	const s = (1 / m - kD) / kC;
	const d = (m - kA) / kC;
	return writeVerified(out, offset, kA, kB, kC, kD, lam, m, s, g, d, flags);
}

/**
 * The afocal case C(g) = 0, A·D = 1: images only when A = m. For m ≠ ±1 the unique
 * placement solves m·s + B + d/m = 0 with s + d = sum; for m = ±1 every s images when
 * m·sum + B = 0 and the symmetric member is written as a family.
 */
function writeAfocal(
	out: Float64Array,
	offset: number,
	kA: number,
	kB: number,
	kC: number,
	kD: number,
	sum: number,
	lam: number,
	m: number,
	g: number,
	flags: number
): number {
	const im = 1 / m;
	if (Math.abs(kA - m) > Math.abs(kA - im) + 1e-12) return 0; // A = 1/m ≠ m: no finite conjugate
	const split = m - im;
	let s: number;
	if (Math.abs(split) > 1e-9) s = (-kB - sum * im) / split;
	else {
		if (!(Math.abs(m * sum + kB) <= VERIFY_TOL * (Math.abs(sum) + Math.abs(kB) + 1e-3) * 10)) return 0;
		s = sum / 2;
		flags |= ROOT_FAMILY;
	}
	return writeVerified(out, offset, kA, kB, kC, kD, lam, m, s, g, sum - s, flags);
}

/** Full matrix T(d)·K·T(s) check, sign flags, and the write of one root. */
function writeVerified(
	out: Float64Array,
	offset: number,
	kA: number,
	kB: number,
	kC: number,
	kD: number,
	lam: number,
	m: number,
	s: number,
	g: number,
	d: number,
	flags: number
): number {
	const fD = kC * s + kD;
	const fA = kA + d * kC;
	const fB = kA * s + kB + d * fD;
	if (s < 0) flags |= ROOT_VIRTUAL_OBJECT;
	if (g < 0) flags |= ROOT_NEGATIVE_GAP;
	if (d < 0) flags |= ROOT_NEGATIVE_BACK;
	const absB = Math.abs(fB);
	if (
		!(absB <= VERIFY_TOL * (Math.abs(kA * s) + Math.abs(kB) + Math.abs(d * fD) + 1e-3)) ||
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
	out[offset + ROOT_RESIDUAL] = absB;
	return 1;
}


// The pair kernel reads the snapshot with literal offsets; keep it in step with snapshot.ts.
if (ELEMENT_STRIDE !== 13 || EL_A !== 0 || EL_B !== 1 || EL_C !== 2 || EL_D !== 3 || EL_THICKNESS !== 4 || ROOT_STRIDE !== 6) {
	throw new Error('optics: snapshot or root layout changed; update the literal offsets in imaging.ts');
}

