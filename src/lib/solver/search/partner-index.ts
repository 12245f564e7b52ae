/**
 * The output-sensitive pair search: for element i first, which partners j can give a physical
 * root at all? The partners are sorted by power once per search (`partnerIndex`); for each row i,
 * `partnerRanges` writes the few ranges of that order whose power can meet the question, and
 * the pair search visits only those (its own prefilter and the optics core's kernel still decide
 * each pair). The ranges are a superset: no physical root is dropped (test:
 * tests/unit/solver/partner-index.test.ts against the brute-force search).
 *
 * Derivation (vertex matrices, no thin-lens approximation). Element i = [a₁ b₁; c₁ d₁], partner
 * j = [a₂ b₂; c₂ d₂] with power φ₂ = −c₂ and trace τ₂ = a₂ + d₂, thicknesses t₁, t₂, track L,
 * λ = L − t₁ − t₂. A root (s, g, d) of the pair kernel has the full matrix M = T(d)·E₂·T(g)·E₁·T(s)
 * = [m 0; C 1/m] (A = m and D = 1/m by construction, B = 0 by det = 1). With F = E₁·T(s) =
 * [a₁  a₁s + b₁; c₁  e₁], e₁ = c₁s + d₁, and m₂ = m·e₁ (the magnification left to j):
 *   (R1) M·F⁻¹ = T(d)·E₂·T(g), entry (1,1):       φ₂·d = a₂ − m₂;
 *   (R2) entry (1,2) with s + g + d = λ and det E₂ = 1:
 *        φ₂·P = m₂·τ₂ − m₂² − 1,   P = m·[e₁·(λ − s) + a₁s + b₁]   (no division: holds at e₁ = 0 too);
 *   (R3) the limits of the physical filter: s ≥ w, d ≥ w, g = λ − s − d ≥ g_min (and all > 0);
 *   (R4) entry (1,2) with the track alone:   d·(m₂ − d₂) = P + b₂.
 * So s lies in [w, λ − g_min − w]. Over a piece of that range, m₂ and e₁ are linear in s and P is a
 * quadratic in s and linear in λ, so their exact ranges are cheap; with the partner's a₂, b₂, d₂,
 * τ₂ and t₂ bounded (over a bucket of the sorted order: strong elements are thick and far from a
 * thin lens, weak ones are close to it), interval arithmetic gives ranges of d (R4, and R1 over
 * R2) that must meet [w, λ − s − g_min], and ranges of φ₂ from R1 (over that d) and R2 that must
 * overlap. The union over the pieces (halved down to 2^MAX_DEPTH, a piece out of reach dropped at
 * once), within each bucket's power range, is what the row visits. The track tolerance widens λ;
 * rounding is covered by slacks far above the kernel's (its roots are verified to 1e-9).
 * The thin-lens picture: for two thin lenses R1 is φ₂·d = 1 − m₂ and R2 the closed form's
 * discriminant condition; a thick element only moves its principal planes (a, d ≠ 1, t > 0).
 *
 * Partners with c = 0 (afocal, no power) or with matrix entries far from a lens's (|a − 1| or
 * |d − 1| above 1) are not sorted: every row visits them, as does a row whose element is afocal.
 */
import { ELEMENT_STRIDE, EL_A, EL_B, EL_C, EL_D, EL_THICKNESS } from '../../optics/snapshot';

/** Halvings of the object-distance range per row and bucket (at most 2^MAX_DEPTH pieces). */
const MAX_DEPTH = 5;
/** Sorted partners per bucket (at least). */
const BUCKET_SIZE = 320;
/** At most this many buckets. */
const MAX_BUCKETS = 16;

/** The partners of one search sorted by power, with bounds per bucket, and a row's scratch. */
export interface PartnerIndex {
	/** Element indices: the sorted partners (by power, ascending), then those every row visits. */
	order: Int32Array;
	/** Power (−C, 1/mm) of order[0 … sorted − 1], ascending. */
	power: Float64Array;
	sorted: number;
	/** Bucket b holds order[start[b] … start[b + 1] − 1]. */
	start: Int32Array;
	/** Per bucket: power range, and ranges of A, B, D, of the trace A + D and of the thickness. */
	powLo: Float64Array;
	powHi: Float64Array;
	aLo: Float64Array;
	aHi: Float64Array;
	bLo: Float64Array;
	bHi: Float64Array;
	dLo: Float64Array;
	dHi: Float64Array;
	trLo: Float64Array;
	trHi: Float64Array;
	tLo: Float64Array;
	tHi: Float64Array;
	/** Scratch of `partnerRanges`: [start, end) pairs of `order`, sorted and disjoint. */
	ranges: Int32Array;
	/** Scratch: one bucket's ranges before they are merged. */
	pending: Int32Array;
}

/** What of the question `partnerRanges` reads. */
export interface PairWindowQuestion {
	trackMm: number;
	trackToleranceMm: number;
	magnification: number;
	minGapMm: number;
	minWorkingDistanceMm: number;
}

/** True when an element takes part in the sorted order (see the module comment). */
function sortable(packed: Float64Array, e: number): boolean {
	const o = e * ELEMENT_STRIDE;
	const a = packed[o + EL_A],
		c = packed[o + EL_C],
		d = packed[o + EL_D],
		t = packed[o + EL_THICKNESS];
	return c !== 0 && Number.isFinite(c) && Math.abs(a - 1) <= 1 && Math.abs(d - 1) <= 1 && Number.isFinite(t);
}

/** Sorts the candidates by power and bounds each bucket (once per search and shard). */
export function partnerIndex(packed: Float64Array, candidates: Int32Array): PartnerIndex {
	const n = candidates.length;
	const reg: number[] = [];
	const rest: number[] = [];
	for (let q = 0; q < n; q++) (sortable(packed, candidates[q]) ? reg : rest).push(candidates[q]);
	const pow = (e: number) => -packed[e * ELEMENT_STRIDE + EL_C];
	reg.sort((x, y) => pow(x) - pow(y) || x - y);
	const sorted = reg.length;
	const order = Int32Array.from([...reg, ...rest]);
	const power = Float64Array.from(reg, pow);
	const buckets = sorted === 0 ? 0 : Math.min(MAX_BUCKETS, Math.max(1, Math.floor(sorted / BUCKET_SIZE)));
	const start = new Int32Array(buckets + 1);
	for (let b = 0; b <= buckets; b++) start[b] = Math.round((b * sorted) / buckets);
	const f = () => new Float64Array(buckets);
	const ix: PartnerIndex = {
		order,
		power,
		sorted,
		start,
		powLo: f(),
		powHi: f(),
		aLo: f(),
		aHi: f(),
		bLo: f(),
		bHi: f(),
		dLo: f(),
		dHi: f(),
		trLo: f(),
		trHi: f(),
		tLo: f(),
		tHi: f(),
		ranges: new Int32Array(2 * (buckets * (1 << MAX_DEPTH) + 1)),
		pending: new Int32Array(2 << MAX_DEPTH)
	};
	for (let b = 0; b < buckets; b++) {
		let aLo = Infinity,
			aHi = -Infinity,
			bLo = Infinity,
			bHi = -Infinity,
			dLo = Infinity,
			dHi = -Infinity,
			trLo = Infinity,
			trHi = -Infinity,
			tLo = Infinity,
			tHi = -Infinity;
		for (let k = start[b]; k < start[b + 1]; k++) {
			const o = order[k] * ELEMENT_STRIDE;
			const a = packed[o + EL_A],
				bb = packed[o + EL_B],
				d = packed[o + EL_D],
				tr = a + d,
				t = packed[o + EL_THICKNESS];
			aLo = Math.min(aLo, a);
			aHi = Math.max(aHi, a);
			bLo = Math.min(bLo, bb);
			bHi = Math.max(bHi, bb);
			dLo = Math.min(dLo, d);
			dHi = Math.max(dHi, d);
			trLo = Math.min(trLo, tr);
			trHi = Math.max(trHi, tr);
			tLo = Math.min(tLo, t);
			tHi = Math.max(tHi, t);
		}
		ix.powLo[b] = power[start[b]];
		ix.powHi[b] = power[start[b + 1] - 1];
		ix.aLo[b] = aLo;
		ix.aHi[b] = aHi;
		ix.bLo[b] = bLo;
		ix.bHi[b] = bHi;
		ix.dLo[b] = dLo;
		ix.dHi[b] = dHi;
		ix.trLo[b] = trLo;
		ix.trHi[b] = trHi;
		ix.tLo[b] = tLo;
		ix.tHi[b] = tHi;
	}
	return ix;
}

/** First k in [lo, hi) with power[k] ≥ x (hi when none). */
function lowerBound(power: Float64Array, lo: number, hi: number, x: number): number {
	while (lo < hi) {
		const mid = (lo + hi) >> 1;
		if (power[mid] < x) lo = mid + 1;
		else hi = mid;
	}
	return lo;
}

/** First k in [lo, hi) with power[k] > x (hi when none). */
function upperBound(power: Float64Array, lo: number, hi: number, x: number): number {
	while (lo < hi) {
		const mid = (lo + hi) >> 1;
		if (power[mid] <= x) lo = mid + 1;
		else hi = mid;
	}
	return lo;
}

/** Relative widening of every interval end (the kernel verifies its roots to 1e-9). */
const WIDEN = 1e-7;

/** Scratch of a row: the element's matrix and the question's limits (see `partnerRanges`). */
const row = new Float64Array(11);
const R_M = 0,
	R_A1 = 1,
	R_B1 = 2,
	R_C1 = 3,
	R_D1 = 4,
	R_W = 5,
	R_GMIN = 6,
	R_SLACK = 7,
	R_LAM_LO = 8,
	R_LAM_HI = 9,
	R_D_LO = 10;
/** The bisection's stack of pieces (depth-first: at most MAX_DEPTH + 1 open at once). */
const stackLo = new Float64Array(2 * MAX_DEPTH + 2);
const stackHi = new Float64Array(2 * MAX_DEPTH + 2);
const stackDepth = new Int32Array(2 * MAX_DEPTH + 2);
/** Scratch of `pieceRange`: the partners of the piece, [k0, k1) of `order`. */
const found = new Int32Array(2);

/**
 * The ranges of `ix.order` that row i (matrix a₁ b₁ c₁ d₁, thickness t₁) must visit, written to
 * `ix.ranges` as [start, end) pairs, sorted and disjoint; returns how many. With `sMax`, only
 * partners that can give a root at an object distance up to sMax. Allocation-free.
 */
export function partnerRanges(ix: PartnerIndex, q: PairWindowQuestion, a1: number, b1: number, c1: number, d1: number, t1: number, sMax = Infinity): number {
	const R = ix.ranges;
	const all = ix.order.length;
	const sorted = ix.sorted;
	let count = 0;
	if (c1 === 0 || !Number.isFinite(c1)) {
		// An afocal first element: every partner.
		R[0] = 0;
		R[1] = all;
		return all > 0 ? 1 : 0;
	}
	const w = q.minWorkingDistanceMm,
		gMin = q.minGapMm;
	const slack = 1e-6 * (Math.abs(q.trackMm) + q.trackToleranceMm + 1);
	row[R_M] = q.magnification;
	row[R_A1] = a1;
	row[R_B1] = b1;
	row[R_C1] = c1;
	row[R_D1] = d1;
	row[R_W] = w;
	row[R_GMIN] = gMin;
	row[R_SLACK] = slack;
	// The physical filter also wants s, d > 0 (the outer surfaces off the planes).
	row[R_D_LO] = Math.max(w - slack, 0);
	const sLo = Math.max(w, 0) - slack;
	const buckets = ix.start.length - 1;
	const pend = ix.pending;
	for (let b = 0; b < buckets; b++) {
		// λ = L − t₁ − t₂ over the track window and the bucket's thicknesses.
		const lamLo = q.trackMm - q.trackToleranceMm - t1 - ix.tHi[b] - slack,
			lamHi = q.trackMm + q.trackToleranceMm - t1 - ix.tLo[b] + slack;
		row[R_LAM_LO] = lamLo;
		row[R_LAM_HI] = lamHi;
		// s ≤ λ − g − d ≤ λ − g_min − w (and at most sMax: the caller wants no root beyond it).
		const sHi = Math.min(lamHi - gMin - w + slack, sMax);
		if (!(sHi >= sLo)) continue;
		// Bisection of the range down to MAX_DEPTH: a piece out of reach is dropped with all its
		// parts; a smallest piece that reaches the whole bucket ends the bucket.
		const k0b = ix.start[b],
			k1b = ix.start[b + 1];
		let np = 0,
			top = 0;
		stackLo[0] = sLo;
		stackHi[0] = sHi;
		stackDepth[0] = 0;
		top = 1;
		while (top > 0) {
			top--;
			const sa = stackLo[top],
				sb = stackHi[top],
				depth = stackDepth[top];
			if (!pieceRange(ix, b, sa, sb)) continue;
			if (depth === MAX_DEPTH) {
				if (found[0] === k0b && found[1] === k1b) {
					np = -1;
					break;
				}
				pend[2 * np] = found[0];
				pend[2 * np + 1] = found[1];
				np++;
				continue;
			}
			const mid = 0.5 * (sa + sb);
			// The upper half first on the stack, so the lower one is taken next.
			stackLo[top] = mid;
			stackHi[top] = sb;
			stackDepth[top] = depth + 1;
			stackLo[top + 1] = sa;
			stackHi[top + 1] = mid;
			stackDepth[top + 1] = depth + 1;
			top += 2;
		}
		if (np < 0) {
			pend[0] = k0b;
			pend[1] = k1b;
			np = 1;
		}
		count = mergeInto(R, count, pend, np);
	}
	if (all > sorted) {
		R[2 * count] = sorted;
		R[2 * count + 1] = all;
		count++;
	}
	return count;
}

/**
 * The partners of bucket b that a root with its object distance s in [sa, sb] can have (R1–R3 in
 * the module comment, by interval arithmetic over the piece, the track window and the bucket's
 * bounds): false when none, else true with [k0, k1) of `order` in `found`.
 */
function pieceRange(ix: PartnerIndex, b: number, sa: number, sb: number): boolean {
	const m = row[R_M],
		a1 = row[R_A1],
		b1 = row[R_B1],
		c1 = row[R_C1],
		d1 = row[R_D1];
	const lamLo = row[R_LAM_LO],
		lamHi = row[R_LAM_HI];
	const aLo = ix.aLo[b],
		aHi = ix.aHi[b],
		trLo = ix.trLo[b],
		trHi = ix.trHi[b],
		pLo = ix.powLo[b],
		pHi = ix.powHi[b];
	// d within the limits: ≥ w (and > 0), ≤ λ − s − g_min.
	let dLo = row[R_D_LO],
		dHi = lamHi - sa - row[R_GMIN] + row[R_SLACK];
	if (!(dHi >= dLo)) return false;
	// m₂ = m·(c₁s + d₁), linear in s.
	const ma = m * (c1 * sa + d1),
		mb = m * (c1 * sb + d1);
	const mLo = ma < mb ? ma : mb,
		mHi = ma < mb ? mb : ma;
	const mAbs = Math.max(Math.abs(mLo), Math.abs(mHi));
	// N = m₂τ − m₂² − 1: linear in τ, concave in m₂ (largest at m₂ = τ/2).
	let nLo = Infinity,
		nHi = -Infinity;
	for (let e = 0; e < 2; e++) {
		const tr = e === 0 ? trLo : trHi;
		const v1 = mLo * tr - mLo * mLo - 1,
			v2 = mHi * tr - mHi * mHi - 1;
		const top = tr / 2 < mLo ? mLo : tr / 2 > mHi ? mHi : tr / 2;
		const vt = top * tr - top * top - 1;
		nLo = Math.min(nLo, v1, v2);
		nHi = Math.max(nHi, vt, v1, v2);
	}
	const nPad = WIDEN * (mAbs * Math.max(Math.abs(trLo), Math.abs(trHi)) + mAbs * mAbs + 1);
	nLo -= nPad;
	nHi += nPad;
	// P/m = −c₁s² + (c₁λ − d₁ + a₁)s + d₁λ + b₁: linear in λ, so its extremes over the piece
	// lie at λ's ends, at the piece's ends or at the parabola's vertex.
	let qLo = Infinity,
		qHi = -Infinity;
	for (let e = 0; e < 2; e++) {
		const lam = e === 0 ? lamLo : lamHi;
		const lin = c1 * lam - d1 + a1,
			k = d1 * lam + b1;
		const va = (-c1 * sa + lin) * sa + k,
			vb = (-c1 * sb + lin) * sb + k;
		qLo = Math.min(qLo, va, vb);
		qHi = Math.max(qHi, va, vb);
		const sv = lin / (2 * c1);
		if (sv > sa && sv < sb) {
			const vv = (-c1 * sv + lin) * sv + k;
			qLo = Math.min(qLo, vv);
			qHi = Math.max(qHi, vv);
		}
	}
	const qPad = WIDEN * (Math.abs(c1) * sb * (sb + Math.abs(lamHi)) + (Math.abs(d1) + Math.abs(a1)) * sb + Math.abs(d1 * lamHi) + Math.abs(b1) + 1e-9);
	qLo -= qPad;
	qHi += qPad;
	const PLo = m > 0 ? m * qLo : m * qHi,
		PHi = m > 0 ? m * qHi : m * qLo;
	// a₂ − m₂ (R1's numerator).
	const aPad = WIDEN * (Math.max(Math.abs(aLo), Math.abs(aHi)) + mAbs);
	const xLo = aLo - mHi - aPad,
		xHi = aHi - mLo + aPad;
	// d = (P + b₂)/(m₂ − d₂) (R4) when the denominator keeps one sign.
	const eLo = mLo - ix.dHi[b],
		eHi = mHi - ix.dLo[b];
	if (eLo > 0 || eHi < 0) {
		const bPad = WIDEN * (Math.abs(ix.bLo[b]) + Math.abs(ix.bHi[b]));
		const yLo = PLo + ix.bLo[b] - bPad,
			yHi = PHi + ix.bHi[b] + bPad;
		quotient(yLo, yHi, eLo, eHi);
		if (span[1] < dLo || span[0] > dHi) return false;
		if (span[0] > dLo) dLo = span[0];
		if (span[1] < dHi) dHi = span[1];
	}
	// d = (a₂ − m₂)·P / N (R1 over R2) when N keeps one sign.
	if (nLo > 0 || nHi < 0) {
		const p1 = xLo * PLo,
			p2 = xLo * PHi,
			p3 = xHi * PLo,
			p4 = xHi * PHi;
		quotient(Math.min(p1, p2, p3, p4), Math.max(p1, p2, p3, p4), nLo, nHi);
		if (span[1] < dLo || span[0] > dHi) return false;
		if (span[0] > dLo) dLo = span[0];
		if (span[1] < dHi) dHi = span[1];
	}
	// φ₂ from R1 over that d (d > 0).
	let fLo: number, fHi: number;
	if (dLo > 0) {
		quotient(xLo, xHi, dLo, dHi);
		fLo = span[0];
		fHi = span[1];
	} else {
		fLo = xLo > 0 ? xLo / dHi : -Infinity;
		fHi = xHi < 0 ? xHi / dHi : Infinity;
	}
	// φ₂ from R2 when P keeps one sign.
	if (PLo > 0 || PHi < 0) {
		quotient(nLo, nHi, PLo, PHi);
		fLo = Math.max(fLo, span[0]);
		fHi = Math.min(fHi, span[1]);
	}
	// A bound lost to rounding (NaN) bounds nothing.
	if (fLo !== fLo) fLo = -Infinity;
	if (fHi !== fHi) fHi = Infinity;
	fLo -= WIDEN * Math.abs(fLo) + 1e-15;
	fHi += WIDEN * Math.abs(fHi) + 1e-15;
	if (!(fLo <= fHi) || fHi < pLo || fLo > pHi) return false;
	const k0b = ix.start[b],
		k1b = ix.start[b + 1];
	const k0 = fLo <= pLo ? k0b : lowerBound(ix.power, k0b, k1b, fLo);
	const k1 = fHi >= pHi ? k1b : upperBound(ix.power, k0, k1b, fHi);
	found[0] = k0;
	found[1] = k1;
	return k0 < k1;
}

/** Scratch of `quotient`: [lowest, highest]. */
const span = new Float64Array(2);

/**
 * The range of y/e for y in [yLo, yHi] and e in [eLo, eHi] (an interval that keeps one sign),
 * into span: the extremes of the four corner quotients.
 */
function quotient(yLo: number, yHi: number, eLo: number, eHi: number): void {
	const r1 = yLo / eLo,
		r2 = yLo / eHi,
		r3 = yHi / eLo,
		r4 = yHi / eHi;
	span[0] = Math.min(r1, r2, r3, r4);
	span[1] = Math.max(r1, r2, r3, r4);
}

/** Sorts a bucket's ranges by start, merges overlapping ones and appends them to R after `count` of them; returns the new count. */
function mergeInto(R: Int32Array, count: number, pend: Int32Array, np: number): number {
	// Insertion sort (a few ranges).
	for (let x = 1; x < np; x++) {
		const s = pend[2 * x],
			e = pend[2 * x + 1];
		let y = x - 1;
		while (y >= 0 && pend[2 * y] > s) {
			pend[2 * y + 2] = pend[2 * y];
			pend[2 * y + 3] = pend[2 * y + 1];
			y--;
		}
		pend[2 * y + 2] = s;
		pend[2 * y + 3] = e;
	}
	for (let x = 0; x < np; x++) {
		const s = pend[2 * x],
			e = pend[2 * x + 1];
		if (count > 0 && s <= R[2 * count - 1]) {
			if (e > R[2 * count - 1]) R[2 * count - 1] = e;
		} else {
			R[2 * count] = s;
			R[2 * count + 1] = e;
			count++;
		}
	}
	return count;
}
