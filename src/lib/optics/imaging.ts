/**
 * The single-element imaging kernel: where one element must stand so that an object
 * plane is imaged onto a target plane a track L away. Reads the snapshot
 * (`snapshot.ts`), writes roots laid out as in `roots.ts` into a caller-owned
 * Float64Array, allocates nothing and never throws. The pair kernel is in
 * `pair-kernel.ts`, its row form with the physical filter (brute-force search) in `pair-row.ts`.
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
	ROOT_NEGATIVE_BACK,
	ROOT_UNVERIFIED
} from './roots';
import { VERIFY_TOL, QUAD_NONE, QUAD_ALL, QUAD_DOUBLE, QUAD_TWO, quadRoots, solveQuadratic } from './quadratic';

// `./imaging` is the one entry point of both kernels and their output layout.
export * from './roots';
export { solvePairKernel } from './pair-kernel';
export { solvePairRow, pairRowRootsFound } from './pair-row';

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

/**
 * Single element i of `snapshot` placed for exactly the magnification m (≠ 0): the track
 * follows. With M = T(d)·E·T(s), the magnification 1/(c·s + D) = m gives s = (1/m − D)/c and
 * B = 0 gives d = −m·(a·s + b); the track is s + t + d. Writes one root (flags as
 * `solveSingleKernel`; the verified magnification from the full matrix) and returns the track,
 * or NaN when the element is afocal (c = 0: one magnification 1/D at every track).
 */
export function singleAtMagnification(snapshot: Float64Array, i: number, magnification: number, out: Float64Array, offset: number): number {
	const o = i * ELEMENT_STRIDE;
	const a = snapshot[o + EL_A],
		b = snapshot[o + EL_B],
		c = snapshot[o + EL_C],
		dd = snapshot[o + EL_D];
	if (c === 0 || !(magnification !== 0) || !Number.isFinite(magnification)) return NaN;
	const s = (1 / magnification - dd) / c;
	const d = -magnification * (a * s + b);
	const lam = s + d;
	if (writeSingle(out, offset, a, b, c, dd, lam, s, 0) === 0) return NaN;
	return lam + snapshot[o + EL_THICKNESS];
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

