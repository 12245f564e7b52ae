/**
 * The brute-force pair search's row: element i first, against many elements j, for one
 * (track, magnification) question, keeping only the roots that can be built. It gives
 * exactly what `solvePairKernel` followed by `checkPairPhysical` gives for each pair (the
 * same roots, bit for bit, in the same order, and the same count of roots found: the same
 * floating-point expressions, evaluated in the same order), but does the work in the
 * cheapest order: per-i work once per row; no real root → next pair before the rounding
 * scale is formed; a smaller root that the signs show is ≤ 0 is skipped before any
 * division; the sign and limit tests on g, s and d before the full-matrix verification;
 * the sag check last; nothing stored for a root that fails. Rare cases (a part without
 * power, a double root, a root near afocal) go through `solvePairKernel` and
 * `checkPairPhysical` themselves. Allocation-free: writes into caller-owned arrays.
 * Measured by tests/bench/optics-pair-kernel.ts; tests/unit/optics/pair-row.test.ts holds
 * it to the pair path on random lenses.
 */
import { solvePairKernel } from './pair-kernel';
import { checkPairPhysical } from './physical';

/** Scratch of `solvePairRow`: [roots found in the last call, before the physical filter]. */
export const pairRowRootsFound = new Float64Array(1);

/** Scratch for the rare pairs handed to `solvePairKernel` (two roots of 6 numbers). */
const fallback = new Float64Array(12);
/** Scratch of `rarePair`: [roots the kernel found]. */
const rareFound = new Float64Array(1);

/**
 * Pairs (i, columns[w]) for w < count, at `trackMm` and `magnification` (finite, ≠ 0).
 * Writes each root that is physical (not flagged ROOT_NON_PHYSICAL by the pair kernel and
 * passing `checkPairPhysical` with the two minimums) to `out` (ROOT_STRIDE numbers each,
 * the pair kernel's layout and values) and its j to `outColumns`, pair by pair in column
 * order and, within a pair, in the kernel's order. Returns how many were written; the
 * count of roots found (physical or not) goes to `pairRowRootsFound[0]`. `out` must hold
 * 2·count roots and `outColumns` 2·count entries.
 */
export function solvePairRow(
	snapshot: Float64Array,
	i: number,
	columns: Int32Array,
	count: number,
	trackMm: number,
	magnification: number,
	minWorkingDistanceMm: number,
	minGapMm: number,
	out: Float64Array,
	outColumns: Int32Array
): number {
	// Literal offsets as in pair-kernel.ts and physical.ts (both assert the layout at load):
	// stride 13; A B C D thickness 0–4; 5 front curvature, 6 back curvature, 10 edge
	// semi-diameter, 11 edge front sag, 12 edge back sag; roots of 6 numbers.
	const o1 = i * 13;
	const a1 = snapshot[o1],
		b1 = snapshot[o1 + 1],
		c1 = snapshot[o1 + 2],
		d1 = snapshot[o1 + 3];
	const lam1 = trackMm - snapshot[o1 + 4];
	const m = magnification;
	const im = 1 / m;
	const mu = m + im;
	const absM = m < 0 ? -m : m;
	const tolA = 1e-9 * (absM > 1 ? absM : 1);
	const minS = minWorkingDistanceMm,
		minG = minGapMm;
	// x ≥ lo is exactly "not negative (the kernel's flag) and at least the minimum".
	const loS = minS > 0 ? minS : minS === minS ? 0 : NaN,
		loG = minG > 0 ? minG : minG === minG ? 0 : NaN;
	// The physical filter's per-i terms.
	const frontSag1 = snapshot[o1 + 11];
	const objectClear = frontSag1 < 0 ? frontSag1 : 0;
	const h1 = snapshot[o1 + 10],
		cb = snapshot[o1 + 6],
		backSagEdge1 = snapshot[o1 + 12];
	let found = 0,
		written = 0;
	for (let w = 0; w < count; w++) {
		const j = columns[w];
		const o2 = j * 13;
		const a2 = snapshot[o2],
			b2 = snapshot[o2 + 1],
			c2 = snapshot[o2 + 2],
			d2 = snapshot[o2 + 3];
		const lam = lam1 - snapshot[o2 + 4];
		const A0 = a2 * a1 + b2 * c1,
			A1 = a2 * c1;
		const C0 = c2 * a1 + d2 * c1,
			C1 = c2 * c1;
		const D0 = c2 * b1 + d2 * d1,
			D1 = c2 * d1;
		const qb = C0 - A1 - D1 - C1 * lam;
		const qc = mu - A0 - D0 - C0 * lam;
		const disc = qb * qb - 4 * C1 * qc;
		// The kernel's tests of the discriminant against its rounding noise, split on the
		// sign first: most pairs with no real root leave here, and the noise only tells
		// them from a double root (rare, as is a part with no power).
		if (disc < 0) {
			const scaleB = Math.abs(C0) + Math.abs(A1) + Math.abs(D1) + Math.abs(C1 * lam);
			const scaleC = Math.abs(mu) + Math.abs(A0) + Math.abs(D0) + Math.abs(C0 * lam);
			const noise = 1e-12 * (scaleB * scaleB + 4 * Math.abs(C1) * scaleC);
			if (C1 !== 0 && disc < -noise) continue;
			written = rarePair(snapshot, i, j, trackMm, m, minS, minG, out, outColumns, written);
			found += rareFound[0];
			continue;
		}
		const scaleB = Math.abs(C0) + Math.abs(A1) + Math.abs(D1) + Math.abs(C1 * lam);
		const scaleC = Math.abs(mu) + Math.abs(A0) + Math.abs(D0) + Math.abs(C0 * lam);
		const noise = 1e-12 * (scaleB * scaleB + 4 * Math.abs(C1) * scaleC);
		if (C1 === 0 || disc <= noise) {
			written = rarePair(snapshot, i, j, trackMm, m, minS, minG, out, outColumns, written);
			found += rareFound[0];
			continue;
		}
		const sq = Math.sqrt(disc);
		const q = -0.5 * (qb + (qb >= 0 ? sq : -sq));
		const r0 = q / C1,
			r1 = qc / q;
		// Ascending, as the kernel orders them.
		const g0 = r0 < r1 ? r0 : r1;
		const g1 = r0 < r1 ? r1 : r0;
		const ta0 = a1 + g0 * c1;
		const ta1 = a1 + g1 * c1;
		const kC0 = c2 * ta0 + d2 * c1;
		const kC1 = c2 * ta1 + d2 * c1;
		// The kernel's afocal test is |kC|·(|s + d| + |kB| + 1e-3) ≤ 1e-10; that factor is
		// at least 1e-3, so |kC|·1e-3 > 1e-10 at both roots rules it out exactly.
		const ak0 = kC0 < 0 ? -kC0 : kC0,
			ak1 = kC1 < 0 ? -kC1 : kC1;
		if (!(ak0 * 1e-3 > 1e-10 && ak1 * 1e-3 > 1e-10)) {
			written = rarePair(snapshot, i, j, trackMm, m, minS, minG, out, outColumns, written);
			found += rareFound[0];
			continue;
		}
		found += 2;
		// The two roots, smaller first, written out twice (a loop over them measured 10 %
		// slower); a root that fails a test leaves its block. When qc/C1, the product of the
		// roots, is ≤ 0 by the signs, the smaller root is ≤ 0 and never physical (the air-gap
		// test wants g > 0): skipped before its division.
		if ((qc < 0) === (C1 < 0)) {
			root0: {
				const g = g0;
				// Negative gap (flag) or below the minimum gap (physical filter).
				if (!(g >= loG)) break root0;
				const kC = kC0;
				const ta = ta0;
				const tb = b1 + g * d1;
				const kA = a2 * ta + b2 * c1,
					kD = c2 * tb + d2 * d1;
				const ic = 1 / kC;
				const s = (im - kD) * ic;
				if (!(s >= loS) || !(s + objectClear > 0)) break root0;
				const d = (m - kA) * ic;
				if (!(d >= loS)) break root0;
				const backSag2 = snapshot[o2 + 12];
				if (!(d - (backSag2 > 0 ? backSag2 : 0) > 0)) break root0;
				// The full-matrix verification (ROOT_UNVERIFIED in the kernel).
				const kB = a2 * tb + b2 * d1;
				const fD = kC * s + kD;
				const fA = kA + d * kC;
				const fB = kA * s + kB + d * fD;
				const absB = Math.abs(fB);
				if (
					!(absB <= 1e-9 * (Math.abs(kA * s) + Math.abs(kB) + Math.abs(d * fD) + 1e-3)) ||
					!(Math.abs(fA - m) <= tolA) ||
					!(Math.abs(s + d + g - lam) <= 1e-9 * (Math.abs(s) + Math.abs(d) + Math.abs(g) + Math.abs(lam) + 1e-3))
				) {
					break root0;
				}
				// Air between the facing surfaces out to the smaller glass edge (checkPairPhysical).
				const h2 = snapshot[o2 + 10];
				if (h1 === h2) {
					if (!(g > 0 && g + snapshot[o2 + 11] - backSagEdge1 > 0)) break root0;
				} else {
					const h = h1 < h2 ? h1 : h2;
					const cf = snapshot[o2 + 5];
					const qB = 1 - cb * cb * h * h,
						qF = 1 - cf * cf * h * h;
					if (qB < -1e-12 || qF < -1e-12) break root0;
					const sagBack = (cb * h * h) / (1 + Math.sqrt(qB > 0 ? qB : 0)),
						sagFront = (cf * h * h) / (1 + Math.sqrt(qF > 0 ? qF : 0));
					if (!(g > 0 && g + sagFront - sagBack > 0)) break root0;
				}
				const o = written * 6;
				out[o] = s;
				out[o + 1] = g;
				out[o + 2] = d;
				out[o + 3] = fA;
				out[o + 4] = 0;
				out[o + 5] = absB;
				outColumns[written++] = j;
			}
		}
		root1: {
			const g = g1;
			// Negative gap (flag) or below the minimum gap (physical filter).
			if (!(g >= loG)) break root1;
			const kC = kC1;
			const ta = ta1;
			const tb = b1 + g * d1;
			const kA = a2 * ta + b2 * c1,
				kD = c2 * tb + d2 * d1;
			const ic = 1 / kC;
			const s = (im - kD) * ic;
			if (!(s >= loS) || !(s + objectClear > 0)) break root1;
			const d = (m - kA) * ic;
			if (!(d >= loS)) break root1;
			const backSag2 = snapshot[o2 + 12];
			if (!(d - (backSag2 > 0 ? backSag2 : 0) > 0)) break root1;
			// The full-matrix verification (ROOT_UNVERIFIED in the kernel).
			const kB = a2 * tb + b2 * d1;
			const fD = kC * s + kD;
			const fA = kA + d * kC;
			const fB = kA * s + kB + d * fD;
			const absB = Math.abs(fB);
			if (
				!(absB <= 1e-9 * (Math.abs(kA * s) + Math.abs(kB) + Math.abs(d * fD) + 1e-3)) ||
				!(Math.abs(fA - m) <= tolA) ||
				!(Math.abs(s + d + g - lam) <= 1e-9 * (Math.abs(s) + Math.abs(d) + Math.abs(g) + Math.abs(lam) + 1e-3))
			) {
				break root1;
			}
			// Air between the facing surfaces out to the smaller glass edge (checkPairPhysical).
			const h2 = snapshot[o2 + 10];
			if (h1 === h2) {
				if (!(g > 0 && g + snapshot[o2 + 11] - backSagEdge1 > 0)) break root1;
			} else {
				const h = h1 < h2 ? h1 : h2;
				const cf = snapshot[o2 + 5];
				const qB = 1 - cb * cb * h * h,
					qF = 1 - cf * cf * h * h;
				if (qB < -1e-12 || qF < -1e-12) break root1;
				const sagBack = (cb * h * h) / (1 + Math.sqrt(qB > 0 ? qB : 0)),
					sagFront = (cf * h * h) / (1 + Math.sqrt(qF > 0 ? qF : 0));
				if (!(g > 0 && g + sagFront - sagBack > 0)) break root1;
			}
			const o = written * 6;
			out[o] = s;
			out[o + 1] = g;
			out[o + 2] = d;
			out[o + 3] = fA;
			out[o + 4] = 0;
			out[o + 5] = absB;
			outColumns[written++] = j;
		}
	}
	pairRowRootsFound[0] = found;
	return written;
}

/**
 * A rare pair through the pair kernel and the physical filter themselves: its physical roots
 * appended at `written` (returns the new count), the roots found in rareFound[0].
 */
function rarePair(
	snapshot: Float64Array,
	i: number,
	j: number,
	trackMm: number,
	m: number,
	minS: number,
	minG: number,
	out: Float64Array,
	outColumns: Int32Array,
	written: number
): number {
	const k = solvePairKernel(snapshot, i, j, trackMm, m, fallback, 0);
	rareFound[0] = k;
	for (let r = 0; r < k; r++) {
		const f = r * 6;
		if ((fallback[f + 4] & 60) !== 0) continue; // ROOT_NON_PHYSICAL
		if (checkPairPhysical(snapshot, i, j, fallback[f], fallback[f + 1], fallback[f + 2], minS, minG) !== 0) continue;
		const o = written * 6;
		for (let x = 0; x < 6; x++) out[o + x] = fallback[f + x];
		outColumns[written++] = j;
	}
	return written;
}

