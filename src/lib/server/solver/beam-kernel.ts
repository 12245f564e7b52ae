/**
 * Mode `beam`, one shard: every single element and every ordered pair (first element in this
 * shard) placed by the optics core's closed forms (`bestSinglePlacement`, `pairMatchRoots`), the
 * physical filter (parts at z ≥ 0, gap, surfaces that do not touch, working distance before the
 * target waist, clearance of the 1/e² beam at every vertex), and the exact rank key of every
 * survivor: efficiency (from the matrices), clearance, length, part count. Nothing is screened
 * approximately, so the best K of the merged shards are exactly the best K answers.
 *
 * Pairs are pruned by two exact bounds, never by an estimate:
 * - the beam's Rayleigh range between the parts must be reachable from both ends given where each
 *   part may stand (`middleRayleighRange`);
 * - branch and bound on the rank key (efficiency, clearance class, length): an exact pair has
 *   efficiency 1, the best there is; its clearance is at most min(ub₁, ub₂) (the first part's clear
 *   aperture over the smallest input beam it can meet, the second part's over the smallest target
 *   beam it can meet, as the beam equals the target beam once matched), and its length is at least
 *   `pairLengthBound`. One sweep puts every pair into a rank bin by that best possible key; the
 *   pairs are then solved bin by bin, and the search stops as soon as the K-th best answer kept
 *   ranks before the next bin's lower edge (nothing later can enter). A sweep keeps at most 65,536
 *   pairs (the best bins); when those run out without closing, it sweeps again from there.
 *
 * Runs in a worker thread (search-worker.ts) and, for tests, on the main thread. No framework or
 * database imports.
 */
import { ELEMENT_STRIDE, EL_A, EL_B, EL_C, EL_D, EL_THICKNESS, EL_SEMI_APERTURE } from '../../optics/snapshot';
import { thinEquivalent, middleRayleighRange, bestSinglePlacement, pairMatchRoots, type MatchBeams, type MatchPart, type ThinEquivalent } from '../../optics/beam-match';
import { checkSinglePhysical, checkPairPhysical, PHYS_OBJECT_PLANE } from '../../optics/physical';
import { overlapFromQ } from '../../optics/coupling';
import { offerBest, PG_FRACTION } from '../../solver/search/progress';

/** Numbers per beam record. */
export const BREC_STRIDE = 8;
export const BREC_I = 0;
/** Second element, −1 for a single part. */
export const BREC_J = 1;
/** First vertex of the first part, mm from z = 0. */
export const BREC_P1 = 2;
/** Vertex gap (pairs), mm. */
export const BREC_GAP = 3;
export const BREC_EFFICIENCY = 4;
/** Smallest clear aperture over 1/e² beam diameter at the vertices. */
export const BREC_CLEARANCE = 5;
/** First to last vertex, mm. */
export const BREC_LENGTH = 6;
/** 1 or 2. */
export const BREC_PARTS = 7;

/** The beam question as the kernel needs it (plain numbers). */
export interface BeamSearchParams {
	inWaistZMm: number;
	inRayleighMm: number;
	/** Input real waist radius, mm (for the clearance bound of the first part). */
	inWaistRadiusMm: number;
	targetZMm: number;
	targetRayleighMm: number;
	targetWaistRadiusMm: number;
	/** M²·λ in mm (the real beam's 1/e² radius at q: √(z_R·M²λ/π·(1 + (z/z_R)²))). */
	m2LambdaMm: number;
	minGapMm: number;
	minWorkingDistanceMm: number;
	minClearance: number;
	maxElements: number;
}

export interface BeamShardInput {
	packed: Float64Array;
	partIndex: Int32Array;
	partUnits: Int32Array;
	candidates: Int32Array;
	params: BeamSearchParams;
	shardIndex: number;
	shardCount: number;
	topK: number;
	deadline: number;
	cancel?: Int32Array | null;
	/** The best K-th rank key any shard of this search has published (encodeRankKey; 0 for none). */
	sharedKth?: BigInt64Array | null;
	/** This shard's progress slot (progress.ts). */
	progress?: Float64Array | null;
}

/** A record's rank key as one progress score (lower is better): efficiency key, clearance class, length. */
function progressScore(efficiency: number, clearance: number, minClearance: number, lengthMm: number): number {
	return ((1e6 - efficiencyKey(efficiency)) * 3 + (2 - clearanceClass(clearance, minClearance))) * 1e6 + Math.min(lengthMm, 999_999);
}

export interface BeamShardResult {
	records: Float64Array;
	count: number;
	configurationsEvaluated: number;
	rootsFound: number;
	physicalRoots: number;
	truncated: boolean;
}

/** Efficiency as ranked: in steps of 1e-6 (an exact two-part match is 1). */
export const efficiencyKey = (efficiency: number): number => Math.round(efficiency * 1e6);

/**
 * Clearance as ranked, in steps of a factor 2 over the clearance asked for: 0 below 2×, 1 for
 * 2–4×, 2 from 4× on. A margin beyond four times the asked clearance changes nothing on the bench;
 * a shorter setup does, so length decides within a step.
 */
export const clearanceClass = (clearance: number, minClearance: number): number => (clearance >= 4 * minClearance ? 2 : clearance >= 2 * minClearance ? 1 : 0);

/** Rank order of two records (negative: a first): efficiency, clearance class, length, part count. */
export function compareBeamRecords(r: Float64Array, a: number, b: number, minClearance: number): number {
	const oa = a * BREC_STRIDE,
		ob = b * BREC_STRIDE;
	const ea = efficiencyKey(r[oa + BREC_EFFICIENCY]),
		eb = efficiencyKey(r[ob + BREC_EFFICIENCY]);
	if (ea !== eb) return eb - ea;
	const ca = clearanceClass(r[oa + BREC_CLEARANCE], minClearance),
		cb = clearanceClass(r[ob + BREC_CLEARANCE], minClearance);
	if (ca !== cb) return cb - ca;
	if (r[oa + BREC_LENGTH] !== r[ob + BREC_LENGTH]) return r[oa + BREC_LENGTH] - r[ob + BREC_LENGTH];
	if (r[oa + BREC_PARTS] !== r[ob + BREC_PARTS]) return r[oa + BREC_PARTS] - r[ob + BREC_PARTS];
	for (const k of [BREC_I, BREC_J, BREC_P1, BREC_GAP]) if (r[oa + k] !== r[ob + k]) return r[oa + k] - r[ob + k];
	return 0;
}

/** A growing list of records that keeps its best `k` (exact order) whenever it grows past 4k. */
class Kept {
	data = new Float64Array(1024 * BREC_STRIDE);
	count = 0;
	constructor(
		readonly k: number,
		readonly minClearance: number
	) {}
	push(rec: Float64Array): void {
		if ((this.count + 1) * BREC_STRIDE > this.data.length) {
			const nb = new Float64Array(this.data.length * 2);
			nb.set(this.data);
			this.data = nb;
		}
		this.data.set(rec, this.count * BREC_STRIDE);
		this.count++;
		if (Number.isFinite(this.k) && this.count > Math.max(4 * this.k, 4096)) this.prune();
	}
	prune(): void {
		const order = Array.from({ length: this.count }, (_, n) => n).sort((a, b) => compareBeamRecords(this.data, a, b, this.minClearance));
		const n = Number.isFinite(this.k) ? Math.min(this.k, this.count) : this.count;
		const out = new Float64Array(Math.max(n, 1) * BREC_STRIDE);
		for (let m = 0; m < n; m++) out.set(this.data.subarray(order[m] * BREC_STRIDE, (order[m] + 1) * BREC_STRIDE), m * BREC_STRIDE);
		this.data = out;
		this.count = n;
	}
}

/** Float32 bit patterns of lengths, rounded up (a published length is never shorter than the true one). */
const f32 = new Float32Array(1),
	u32 = new Uint32Array(f32.buffer);
function lengthBitsUp(l: number): number {
	f32[0] = l;
	if (f32[0] < l) u32[0]++;
	return u32[0];
}

/**
 * A rank key in one number, larger for a better key: (efficiency key · 4 + class) in the high bits,
 * the complement of the length's float32 bits (rounded up) in the low 32. Shards publish their K-th
 * key as this number (an atomic maximum) and decode the best one published.
 */
export function encodeRankKey(e: number, c: number, l: number): bigint {
	return (BigInt(e * 4 + c) << 32n) | BigInt(0xffffffff - lengthBitsUp(l));
}
export function decodeRankKey(key: bigint): [number, number, number] {
	const high = Number(key >> 32n);
	u32[0] = 0xffffffff - Number(key & 0xffffffffn);
	return [Math.floor(high / 4), high % 4, f32[0]];
}

/**
 * The rank keys (efficiency key, clearance class, length) of the K best answers kept so far, for
 * the branch and bound: a pair whose best possible key ranks after the K-th cannot enter the top K.
 * With a `shared` cell (one per search, read and written by every shard's worker), a shard also
 * prunes by the best K-th key any shard has published: that shard already holds K answers that rank
 * at least as well, so the pruned pair cannot be in the merged top K either.
 */
class BestKeys {
	private readonly eff: number[] = [];
	private readonly cls: number[] = [];
	private readonly len: number[] = [];
	/** The best published K-th key decoded, and the raw value it was decoded from. */
	private sharedSeen = 0n;
	private readonly sharedKey: [number, number, number] = [0, 0, 0];
	constructor(
		readonly k: number,
		private readonly shared: BigInt64Array | null = null
	) {}
	/** Negative when key (e, c, l) ranks before the stored key at index m. */
	private cmp(e: number, c: number, l: number, m: number): number {
		if (e !== this.eff[m]) return this.eff[m] - e;
		if (c !== this.cls[m]) return this.cls[m] - c;
		return l - this.len[m];
	}
	add(e: number, c: number, l: number): void {
		if (!Number.isFinite(this.k)) return;
		const n = this.eff.length;
		if (n === this.k && this.cmp(e, c, l, n - 1) >= 0) return;
		let at = n;
		while (at > 0 && this.cmp(e, c, l, at - 1) < 0) at--;
		this.eff.splice(at, 0, e);
		this.cls.splice(at, 0, c);
		this.len.splice(at, 0, l);
		if (this.eff.length > this.k) {
			this.eff.pop();
			this.cls.pop();
			this.len.pop();
		}
		if (this.shared && this.eff.length === this.k) {
			const m = this.k - 1;
			const mine = encodeRankKey(this.eff[m], this.cls[m], this.len[m]);
			for (let old = Atomics.load(this.shared, 0); mine > old; ) {
				const was = Atomics.compareExchange(this.shared, 0, old, mine);
				if (was === old) break;
				old = was;
			}
		}
	}
	/** The best K-th key another shard published, when it beats this shard's own (else null). */
	private published(): [number, number, number] | null {
		if (!this.shared) return null;
		const raw = Atomics.load(this.shared, 0);
		if (raw === 0n) return null;
		if (raw !== this.sharedSeen) {
			const [e, c, l] = decodeRankKey(raw);
			this.sharedKey[0] = e;
			this.sharedKey[1] = c;
			this.sharedKey[2] = l;
			this.sharedSeen = raw;
		}
		return this.sharedKey;
	}
	/** The K-th key (efficiency key, class, length), or null while fewer than K are kept (here or in a shard that published). */
	kth(): [number, number, number] | null {
		const n = this.eff.length;
		const own: [number, number, number] | null = n === this.k ? [this.eff[n - 1], this.cls[n - 1], this.len[n - 1]] : null;
		const pub = this.published();
		if (!pub) return own;
		if (!own) return [pub[0], pub[1], pub[2]];
		const better = own[0] !== pub[0] ? own[0] > pub[0] : own[1] !== pub[1] ? own[1] > pub[1] : own[2] <= pub[2];
		return better ? own : [pub[0], pub[1], pub[2]];
	}
	/** True when a key (e, c, l) that is a bound on what a configuration can reach cannot enter the top K. */
	excludes(e: number, c: number, l: number): boolean {
		const n = this.eff.length;
		if (n === this.k && this.cmp(e, c, l, n - 1) > 1e-9 * Math.max(1, l)) return true;
		const pub = this.published();
		if (!pub) return false;
		const d = e !== pub[0] ? pub[0] - e : c !== pub[1] ? pub[1] - c : l - pub[2];
		return d > 1e-9 * Math.max(1, l);
	}
}

/** Elements whose pairs among themselves are solved before the sweep (the thinnest ones). */
const SEED_COUNT = 60;

/** Length bins per clearance class of the branch and bound (log scale, 0.1 mm to 100 m). */
const LENGTH_BINS = 1200;
const LOG_LENGTH_LO = -1,
	LOG_LENGTH_SPAN = 6;
/** Rank bins: clearance class 2 first, then 1, then 0; within one, by length. */
const RANK_BINS = 3 * LENGTH_BINS;
function rankBin(cls: number, lengthMm: number): number {
	const x = lengthMm > 0 ? ((Math.log10(lengthMm) - LOG_LENGTH_LO) / LOG_LENGTH_SPAN) * LENGTH_BINS : 0;
	const bin = x <= 0 ? 0 : x >= LENGTH_BINS - 1 ? LENGTH_BINS - 1 : Math.floor(x);
	return (2 - cls) * LENGTH_BINS + bin;
}
/** The smallest length a key in rank bin b can have (its lower edge; 0 for the first bin of a class). */
function binLowerLength(b: number): number {
	const bin = b % LENGTH_BINS;
	return bin === 0 ? 0 : Math.pow(10, LOG_LENGTH_LO + (bin * LOG_LENGTH_SPAN) / LENGTH_BINS) * (1 - 1e-12);
}

/** Smallest and largest of √max(0, k·Z − Z²) over Z in [lo, hi] (a concave parabola under the root). */
function rootRange(k: number, lo: number, hi: number, out: Float64Array): void {
	const peak = hi < k / 2 ? hi : lo > k / 2 ? lo : k / 2;
	const glo = k * lo - lo * lo,
		ghi = k * hi - hi * hi,
		gpk = k * peak - peak * peak;
	out[0] = Math.sqrt(Math.max(0, glo < ghi ? glo : ghi));
	out[1] = Math.sqrt(Math.max(0, gpk));
}
const range1 = new Float64Array(2),
	range2 = new Float64Array(2);

/**
 * Lower bound of the first-to-last-vertex length of any physical exact match of the pair with the
 * middle Rayleigh range in [lo, hi] (see the module comment of beam-match.ts): the gap between the
 * principal planes is e = u + v with u = f₁ ± √(f₁²Z/z₀ − Z²), v = f₂ ± √(f₂²Z/z_t − Z²); a sign
 * branch whose largest e gives a vertex gap below the minimum has no physical root.
 */
function pairLengthBound(
	f1: number,
	h11: number,
	h21: number,
	t1: number,
	f2: number,
	h12: number,
	h22: number,
	t2: number,
	z0: number,
	zt: number,
	lo: number,
	hi: number,
	minGapMm: number
): number {
	rootRange((f1 * f1) / z0, lo, hi, range1);
	rootRange((f2 * f2) / zt, lo, hi, range2);
	const eMinPhysical = minGapMm + h12 - h21;
	let best = Infinity;
	for (let s1 = -1; s1 <= 1; s1 += 2) {
		const uLo = s1 < 0 ? f1 - range1[1] : f1 + range1[0],
			uHi = s1 < 0 ? f1 - range1[0] : f1 + range1[1];
		for (let s2 = -1; s2 <= 1; s2 += 2) {
			const vLo = s2 < 0 ? f2 - range2[1] : f2 + range2[0],
				vHi = s2 < 0 ? f2 - range2[0] : f2 + range2[1];
			if (uHi + vHi < eMinPhysical) continue;
			const e = Math.max(uLo + vLo, eMinPhysical);
			if (e < best) best = e;
		}
	}
	void h22;
	return best + h21 - h12 + t1 + t2;
}

const q = new Float64Array(2);
function law(qr: number, qi: number, a: number, b: number, c: number, d: number): void {
	const nr = a * qr + b,
		ni = a * qi;
	const dr = c * qr + d,
		di = c * qi;
	const den = dr * dr + di * di;
	q[0] = (nr * dr + ni * di) / den;
	q[1] = (ni * dr - nr * di) / den;
}

/** 1/e² radius of the real beam where the parameter is (qr, qi). */
function radius(qr: number, qi: number, m2LambdaMm: number): number {
	return Math.sqrt(((qi * m2LambdaMm) / Math.PI) * (1 + (qr / qi) * (qr / qi)));
}

function partOf(packed: Float64Array, e: number): MatchPart {
	const o = e * ELEMENT_STRIDE;
	return { a: packed[o + EL_A], b: packed[o + EL_B], c: packed[o + EL_C], d: packed[o + EL_D], thicknessMm: packed[o + EL_THICKNESS] };
}

/** Largest beam radius a part takes: its clear semi-aperture over the clearance factor (Infinity when unknown). */
function allowedRadius(packed: Float64Array, e: number, minClearance: number): number {
	const h = packed[e * ELEMENT_STRIDE + EL_SEMI_APERTURE];
	return h > 0 ? h / minClearance : Infinity;
}

/**
 * Walks the beam through the placement: returns the smallest clearance (semi-aperture over beam
 * radius) at the parts' vertices and writes the efficiency into out[0]. Elements e1 (at p1) and
 * optionally e2 (gap after e1).
 */
function walk(packed: Float64Array, p: BeamSearchParams, e1: number, p1: number, e2: number, gap: number, out: Float64Array): number {
	let qr = p1 - p.inWaistZMm,
		qi = p.inRayleighMm;
	let clearance = Infinity;
	const check = (e: number, r: number) => {
		const h = packed[e * ELEMENT_STRIDE + EL_SEMI_APERTURE];
		if (h > 0) clearance = Math.min(clearance, h / r);
	};
	let o = e1 * ELEMENT_STRIDE;
	check(e1, radius(qr, qi, p.m2LambdaMm));
	law(qr, qi, packed[o + EL_A], packed[o + EL_B], packed[o + EL_C], packed[o + EL_D]);
	qr = q[0];
	qi = q[1];
	check(e1, radius(qr, qi, p.m2LambdaMm));
	let z = p1 + packed[o + EL_THICKNESS];
	if (e2 >= 0) {
		qr += gap;
		z += gap;
		o = e2 * ELEMENT_STRIDE;
		check(e2, radius(qr, qi, p.m2LambdaMm));
		law(qr, qi, packed[o + EL_A], packed[o + EL_B], packed[o + EL_C], packed[o + EL_D]);
		qr = q[0];
		qi = q[1];
		check(e2, radius(qr, qi, p.m2LambdaMm));
		z += packed[o + EL_THICKNESS];
	}
	out[0] = overlapFromQ(qr + (p.targetZMm - z), qi, 0, p.targetRayleighMm);
	return clearance;
}

const counters = new Float64Array(3);
const rec = new Float64Array(BREC_STRIDE);
const effOut = new Float64Array(1);

/** Ranges of the first-vertex position of a part as the first (or only) part, from the bench and the input beam's clearance. */
function firstRange(packed: Float64Array, p: BeamSearchParams, e: number, after: number): [number, number] | null {
	const t = packed[e * ELEMENT_STRIDE + EL_THICKNESS];
	let lo = 0,
		hi = p.targetZMm - p.minWorkingDistanceMm - t - after;
	const wMax = allowedRadius(packed, e, p.minClearance);
	if (Number.isFinite(wMax)) {
		// The input beam at the first vertex must fit: W_in(z) ≤ wMax.
		const ratio = wMax / p.inWaistRadiusMm;
		if (!(ratio >= 1)) return null;
		const reach = p.inRayleighMm * Math.sqrt(ratio * ratio - 1);
		lo = Math.max(lo, p.inWaistZMm - reach);
		hi = Math.min(hi, p.inWaistZMm + reach);
	}
	return lo <= hi ? [lo, hi] : null;
}

/** Range of the last-vertex position of a part as the second part, from the bench and the target beam's clearance. */
function lastRange(packed: Float64Array, p: BeamSearchParams, e: number): [number, number] | null {
	const t = packed[e * ELEMENT_STRIDE + EL_THICKNESS];
	let lo = t + p.minGapMm,
		hi = p.targetZMm - p.minWorkingDistanceMm;
	const wMax = allowedRadius(packed, e, p.minClearance);
	if (Number.isFinite(wMax)) {
		const ratio = wMax / p.targetWaistRadiusMm;
		if (!(ratio >= 1)) return null;
		const reach = p.targetRayleighMm * Math.sqrt(ratio * ratio - 1);
		lo = Math.max(lo, p.targetZMm - reach);
		hi = Math.min(hi, p.targetZMm + reach);
	}
	return lo <= hi ? [lo, hi] : null;
}

/**
 * Test switches. With `columnPruning` off, every row of a sweep visits every column and the sweep
 * starts with no cap (the search before the sorted-column cut); tests compare the two, also with a
 * small `bufferCapacity` (pairs a sweep keeps, 65,536) so that small stocks need several sweeps.
 * Never changed outside tests.
 */
export const beamKernelOptions = { columnPruning: true, bufferCapacity: 1 << 16 };

/** Largest √max(0, k·Z − Z²) over Z in [lo, hi]. */
function rootMax(k: number, lo: number, hi: number): number {
	rootRange(k, lo, hi, range1);
	return range1[1];
}

/**
 * The second parts for rows whose middle Rayleigh range is at most `zMax`: `cols` sorted by
 * `bound` ascending, where bound is a lower bound of the second part's share of any such pair's
 * length bound, f₂ − max √(k₂Z − Z²) over Z in [z₂lo, min(z₂hi, zMax)], − h₁ + t (see
 * `pairLengthBound`); ∞ when that interval is empty (no pair with such a row). `part`: part index.
 */
interface ColumnLevel {
	zMax: number;
	/**
	 * cols are grouped by their clearance class as second part (cls2: 0, 1, 2), then by the first
	 * cap of `caps` at or above their largest Rayleigh range z₂hi (index j); group (g, j) runs from
	 * segStart[g·caps.length + j] to the next entry.
	 */
	segStart: Int32Array;
	/** The caps of the Rayleigh range shared by all levels (the last is ∞). */
	caps: number[];
	cols: Int32Array;
	bound: Float64Array;
	part: Int32Array;
}

/**
 * How far a half of the sorted-column bound is lowered against rounding: √(k·Z − Z²) near a root of
 * the parabola carries an error up to about √ε·k (ε = 2.2e-16) in this computation and in
 * pairLengthBound alike, and the sums about ε times their terms; 1e-7·(1 + k + |f| + |h| + t) is
 * several times both.
 */
const roundingSlack = (k: number, f: number, h: number, t: number): number => 1e-7 * (1 + k + Math.abs(f) + Math.abs(h) + Math.abs(t));

/** Rows sampled for the sweep's starting cap: every SAMPLE_STRIDE-th. */
const SAMPLE_STRIDE = 32;

/** Levels of the sorted-column cut (geometric in zMax over the second parts' Rayleigh ranges), plus the unrestricted one. */
const COLUMN_LEVELS = 16;

function columnLevels(col: number[], cls2: Int8Array, z2lo: Float64Array, z2hi: Float64Array, F: Float64Array, H1: Float64Array, T: Float64Array, zt: number, partOfK: (k: number) => number): ColumnLevel[] {
	let zLo = Infinity,
		zHi = 0;
	for (const k of col) {
		if (z2lo[k] > 0 && z2lo[k] < zLo) zLo = z2lo[k];
		if (z2hi[k] > zHi) zHi = z2hi[k];
	}
	const caps: number[] = [];
	if (zLo < zHi) for (let j = 0; j < COLUMN_LEVELS; j++) caps.push(zLo * Math.pow(zHi / zLo, (j + 1) / COLUMN_LEVELS));
	caps.push(Infinity);
	const nb = caps.length;
	const hb = new Int32Array(F.length);
	for (const k of col) {
		let j = 0;
		while (!(z2hi[k] <= caps[j])) j++;
		hb[k] = j;
	}
	const share = new Float64Array(F.length);
	return caps.map((zMax) => {
		for (const k of col) {
			const hi = z2hi[k] < zMax ? z2hi[k] : zMax;
			const kk = (F[k] * F[k]) / zt;
			share[k] = z2lo[k] <= hi ? F[k] - rootMax(kk, z2lo[k], hi) - H1[k] + T[k] - roundingSlack(kk, F[k], H1[k], T[k]) : Infinity;
		}
		const order = col.slice().sort((x, y) => cls2[x] - cls2[y] || hb[x] - hb[y] || share[x] - share[y] || x - y);
		const segStart = new Int32Array(3 * nb + 1);
		for (const k of order) segStart[cls2[k] * nb + hb[k] + 1]++;
		for (let x = 0; x < 3 * nb; x++) segStart[x + 1] += segStart[x];
		return { zMax, segStart, caps, cols: Int32Array.from(order), bound: Float64Array.from(order, (k) => share[k]), part: Int32Array.from(order, partOfK) };
	});
}

/** The arrays a sweep over the pairs reads. */
interface SweepArrays {
	rows: number[];
	/** The second parts in orders for the sorted-column cut, by `zMax` ascending; the last has zMax = ∞. */
	levels: ColumnLevel[];
	z1lo: Float64Array;
	z1hi: Float64Array;
	z2lo: Float64Array;
	z2hi: Float64Array;
	F: Float64Array;
	H1: Float64Array;
	H2: Float64Array;
	T: Float64Array;
	cls1: Int8Array;
	cls2: Int8Array;
	partIndex: Int32Array;
	candidates: Int32Array;
	partUnits: Int32Array;
	/** 1 for the seed elements: pairs of two seeds were solved before the sweep. */
	seed: Uint8Array;
	bestKeys: BestKeys;
	/** The shard's progress slot: a sweep counts for the first half of the fraction. */
	progress: Float64Array | null;
}

/**
 * One sweep over the shard's pairs: each pair's best possible rank bin (clearance class bound,
 * length bound); pairs in bins (fromBin, cap] go to a buffer, and `cap` falls whenever the buffer
 * is full, so the buffer always holds every pair of the bins up to `cap` (exact for those bins).
 */
function sweepPairs(
	a: SweepArrays,
	n: number,
	z0: number,
	zt: number,
	minGapMm: number,
	fromBin: number,
	capacity: number,
	deadline: number,
	cancel: Int32Array | null
): { buf: Int32Array; bufBin: Int16Array; count: number; cap: number; truncated: boolean } {
	const { rows, levels, z1lo, z1hi, z2lo, z2hi, F, H1, H2, T, cls1, cls2, partIndex, candidates, partUnits, seed, bestKeys, progress } = a;
	let size = 1 << 12;
	let buf: Int32Array = new Int32Array(size),
		bufBin: Int16Array = new Int16Array(size);
	let count = 0;
	let cap = RANK_BINS - 1;
	const inBuf = new Float64Array(RANK_BINS);
	/** Doubles the buffer (pair codes and their bins). */
	const grow = () => {
		size *= 2;
		const nb = new Int32Array(size);
		nb.set(buf);
		buf = nb;
		const nbb = new Int16Array(size);
		nbb.set(bufBin);
		bufBin = nbb;
	};
	// Per class c: lengths at or beyond capLen[c] fall after `cap`.
	const capLen = new Float64Array(3);
	const setCaps = () => {
		for (let c = 0; c < 3; c++) {
			const base = (2 - c) * LENGTH_BINS;
			capLen[c] = cap < base ? 0 : cap >= base + LENGTH_BINS - 1 ? Infinity : binLowerLength(cap - base + 1);
		}
	};
	setCaps();
	const ncols = levels[levels.length - 1].cols.length;
	// The K-th best key kept does not change during a sweep: read it once. An exact pair has the
	// best efficiency key (1e6), so it is excluded when the K-th has 1e6 and a better class, or the
	// same class and a shorter length (with the rounding margin of BestKeys.excludes).
	const kth = bestKeys.kth();
	const kOn = kth !== null && kth[0] === 1e6;
	const kCls = kOn ? kth![1] : -1,
		kLen = kOn ? kth![2] : Infinity;
	const pruneCols = beamKernelOptions.columnPruning;
	const rowBoundAt = new Float64Array(levels[0].caps.length);
	if (pruneCols && Number.isFinite(capacity)) {
		// Starting cap from a sample of the rows (every SAMPLE_STRIDE-th): the bin where the sample's
		// pairs, scaled up, fill half the buffer. Any cap is exact (the bins after it are swept
		// later); a good one lets the sorted-column cut work from the first row on.
		const hist = new Float64Array(RANK_BINS);
		for (let r = 0; r < rows.length; r += SAMPLE_STRIDE) {
			const k1 = rows[r];
			const a1 = z1lo[k1],
				b1 = z1hi[k1],
				c1 = cls1[k1];
			const cols = levels[levels.length - 1].cols;
			for (let m = 0; m < ncols; m++) {
				const k2 = cols[m];
				const lo = a1 > z2lo[k2] ? a1 : z2lo[k2],
					hi = b1 < z2hi[k2] ? b1 : z2hi[k2];
				if (!(lo <= hi)) continue;
				const c = c1 < cls2[k2] ? c1 : cls2[k2];
				if (c < kCls) continue;
				const len = pairLengthBound(F[k1], H1[k1], H2[k1], T[k1], F[k2], H1[k2], H2[k2], T[k2], z0, zt, lo, hi, minGapMm);
				if (len === Infinity || (c === kCls && len > kLen * (1 + 1e-9) + 1e-9)) continue;
				const b = rankBin(c, len);
				if (b > fromBin) hist[b] += SAMPLE_STRIDE;
			}
		}
		let sum = 0;
		for (let b = fromBin + 1; b < RANK_BINS; b++) {
			sum += hist[b];
			if (sum >= capacity / 2) {
				cap = b;
				break;
			}
		}
		setCaps();
	}
	for (let r = 0; r < rows.length; r++) {
		if ((r & 15) === 0) {
			if (Date.now() > deadline || (cancel !== null && Atomics.load(cancel, 0) !== 0)) return { buf, bufBin, count, cap, truncated: true };
			if (progress !== null && fromBin < 0) progress[PG_FRACTION] = (0.5 * r) / rows.length;
		}
		const k1 = rows[r];
		const a1 = z1lo[k1],
			b1 = z1hi[k1],
			f1 = F[k1],
			h11 = H1[k1],
			h21 = H2[k1],
			t1 = T[k1],
			c1 = cls1[k1],
			part1 = partIndex[candidates[k1]];
		const oneUnit = partUnits[part1] < 2;
		const seeded = seed[k1] === 1;
		// Sorted-column cut: pairLengthBound(k1, k2) ≥ rowBound + bound[m] (each half taken over a
		// Rayleigh interval that contains the pair's, and the bound's e is at least the smallest u
		// plus the smallest v of any sign branch), and a pair of class c = min(c1, c2) goes to the
		// buffer only when c ≥ kCls, its bound is below capLen[c] and, in class kCls, at most kLen
		// (with lenLim's margin). Within one column class (bound ascending), once rowBound + bound[m]
		// exceeds that limit (with a rounding margin far above the arithmetic's error), no later
		// column of the class can go to the buffer. The limits only fall during the sweep, so taking
		// them at the row's start is safe.
		let level = levels[levels.length - 1];
		const nb = levels[0].caps.length;
		if (pruneCols) {
			// The pair's Rayleigh range is at most b1: the first level that covers b1.
			for (const l of levels)
				if (l.zMax >= b1) {
					level = l;
					break;
				}
			const kRow = (f1 * f1) / z0;
			// The first part's half, with the pair's Z also at most the group's cap (z₂hi ≤ cap); ∞ when
			// the group's columns all lie below a1 (no overlap).
			const caps = level.caps;
			for (let j = 0; j < nb; j++) {
				const top = caps[j] < b1 ? caps[j] : b1;
				rowBoundAt[j] = a1 <= top ? f1 - rootMax(kRow, a1, top) + h21 + t1 - roundingSlack(kRow, f1, h21, t1) : Infinity;
			}
		}
		const cols = level.cols,
			partOfCol = level.part,
			colBound = level.bound;
		for (let seg = 0; seg < 3 * nb; seg++) {
			const g = Math.floor(seg / nb);
			let m0 = level.segStart[seg],
				colEnd = level.segStart[seg + 1];
			if (m0 === colEnd) continue;
			if (pruneCols) {
				const rowBound = rowBoundAt[seg - g * nb];
				if (rowBound === Infinity) continue;
				const c = c1 < g ? c1 : g;
				const limit = c < kCls ? -Infinity : c === kCls ? Math.min(capLen[c], kLen * (1 + 1e-9) + 1e-9) : capLen[c];
				if (!(limit > 0)) continue;
				{
					// With no length limit, still stop at the columns whose Rayleigh interval lies above this level (bound ∞: no overlap).
					const edge = limit === Infinity ? Number.MAX_VALUE : limit - rowBound + 1e-7 * (1 + Math.abs(limit) + Math.abs(rowBound));
					let lo = m0,
						hi = colEnd;
					while (lo < hi) {
						const mid = (lo + hi) >> 1;
						if (colBound[mid] > edge) hi = mid;
						else lo = mid + 1;
					}
					colEnd = lo;
				}
			}
			for (let m = m0; m < colEnd; m++) {
				const k2 = cols[m];
				const zlo2 = z2lo[k2],
					zhi2 = z2hi[k2];
				const lo = a1 > zlo2 ? a1 : zlo2,
					hi = b1 < zhi2 ? b1 : zhi2;
				if (!(lo <= hi)) continue;
				if (oneUnit && partOfCol[m] === part1) continue;
				if (seeded && seed[k2] === 1) continue;
				const c2 = cls2[k2];
				const c = c1 < c2 ? c1 : c2;
				if (c < kCls) continue;
				const lim = capLen[c];
				if (lim === 0) continue;
				const lenLim = c === kCls ? kLen * (1 + 1e-9) + 1e-9 : Infinity;
				// No pair is shorter than its two thicknesses and the smallest gap.
				if (t1 + T[k2] + minGapMm > lenLim) continue;
				const len = pairLengthBound(f1, h11, h21, t1, F[k2], H1[k2], H2[k2], T[k2], z0, zt, lo, hi, minGapMm);
				if (!(len < lim) || len > lenLim) continue;
				const b = rankBin(c, len);
				if (b <= fromBin || b > cap) continue;
				if (count === size) {
					if (size < capacity) grow();
					else {
						// Full: lower the cap to keep about half (at least one bin), drop the rest.
						let keep = 0,
							nc = fromBin;
						while (nc < RANK_BINS - 1 && keep + inBuf[nc + 1] <= size / 2) keep += inBuf[++nc];
						if (nc <= fromBin) nc = fromBin + 1;
						let w = 0;
						for (let x = 0; x < count; x++) if (bufBin[x] <= nc) (buf[w] = buf[x]), (bufBin[w++] = bufBin[x]);
						count = w;
						for (let x = nc + 1; x < RANK_BINS; x++) inBuf[x] = 0;
						cap = nc;
						setCaps();
						if (b > cap) continue;
						if (count === size) grow();
					}
				}
				buf[count] = k1 * n + k2;
				bufBin[count++] = b;
				inBuf[b]++;
			}
		}
	}
	return { buf, bufBin, count, cap, truncated: false };
}

/** Runs one shard of mode beam (see the module comment). */
export function beamShard(input: BeamShardInput): BeamShardResult {
	const { packed, partIndex, partUnits, candidates, params: p } = input;
	const kept = new Kept(input.topK, p.minClearance);
	counters.fill(0);
	const progress = input.progress ?? null;
	const cancel = input.cancel ?? null;
	let truncated = false;
	const beams: MatchBeams = { inWaistZMm: p.inWaistZMm, inRayleighMm: p.inRayleighMm, targetZMm: p.targetZMm, targetRayleighMm: p.targetRayleighMm };
	const n = candidates.length;
	// Per element: the interval of middle Rayleigh ranges as first part and as second part.
	const z1lo = new Float64Array(n),
		z1hi = new Float64Array(n),
		z2lo = new Float64Array(n),
		z2hi = new Float64Array(n);
	const parts: (MatchPart | null)[] = new Array(n);
	for (let k = 0; k < n; k++) {
		const e = candidates[k];
		const part = partOf(packed, e);
		const th = thinEquivalent(part.a, part.b, part.c, part.d);
		parts[k] = th ? part : null;
		z1lo[k] = z1hi[k] = z2lo[k] = z2hi[k] = NaN;
		if (!th) continue;
		const r1 = firstRange(packed, p, e, p.minGapMm);
		if (r1) {
			const zr = middleRayleighRange(th.fMm, p.inRayleighMm, r1[0] + th.h1Mm - p.inWaistZMm, r1[1] + th.h1Mm - p.inWaistZMm);
			if (zr) [z1lo[k], z1hi[k]] = zr;
		}
		const r2 = lastRange(packed, p, e);
		if (r2) {
			const zr = middleRayleighRange(th.fMm, p.targetRayleighMm, p.targetZMm - r2[1] - th.h2Mm, p.targetZMm - r2[0] - th.h2Mm);
			if (zr) [z2lo[k], z2hi[k]] = zr;
		}
	}
	// Upper bounds of the clearance a part can have as first / as second part (see the module comment).
	const ub1 = new Float64Array(n).fill(-Infinity),
		ub2 = new Float64Array(n).fill(-Infinity);
	for (let k = 0; k < n; k++) {
		if (!(z1lo[k] <= z1hi[k]) && !(z2lo[k] <= z2hi[k])) continue;
		const e = candidates[k];
		const h = packed[e * ELEMENT_STRIDE + EL_SEMI_APERTURE];
		const r1 = firstRange(packed, p, e, p.minGapMm),
			r2 = lastRange(packed, p, e);
		if (r1 && z1lo[k] <= z1hi[k]) {
			const dz = Math.max(0, r1[0] - p.inWaistZMm, p.inWaistZMm - r1[1]);
			ub1[k] = h > 0 ? h / (p.inWaistRadiusMm * Math.sqrt(1 + (dz / p.inRayleighMm) ** 2)) : Infinity;
		}
		if (r2 && z2lo[k] <= z2hi[k]) {
			const dz = Math.max(0, r2[0] - p.targetZMm, p.targetZMm - r2[1]);
			ub2[k] = h > 0 ? h / (p.targetWaistRadiusMm * Math.sqrt(1 + (dz / p.targetRayleighMm) ** 2)) : Infinity;
		}
	}
	const bestKeys = new BestKeys(input.topK, input.sharedKth ?? null);
	const thin: (ThinEquivalent | null)[] = candidates.length ? Array.from(candidates, (e) => { const o = e * ELEMENT_STRIDE; return thinEquivalent(packed[o + EL_A], packed[o + EL_B], packed[o + EL_C], packed[o + EL_D]); }) : [];
	// Single parts: shard 0 does them all.
	if (input.shardIndex === 0) {
		for (let k = 0; k < n; k++) {
			const part = parts[k];
			if (!part) continue;
			const e = candidates[k];
			counters[0]++;
			const range = firstRange(packed, p, e, 0);
			if (!range) continue;
			const best = bestSinglePlacement(beams, part, range[0], range[1]);
			if (!best) continue;
			counters[1]++;
			const d = p.targetZMm - best.p - part.thicknessMm;
			if ((checkSinglePhysical(packed, e, best.p + p.minWorkingDistanceMm, d, p.minWorkingDistanceMm) & ~PHYS_OBJECT_PLANE) !== 0) continue;
			const clearance = walk(packed, p, e, best.p, -1, 0, effOut);
			if (!(clearance >= p.minClearance * (1 - 1e-12))) continue;
			counters[2]++;
			rec[BREC_I] = e;
			rec[BREC_J] = -1;
			rec[BREC_P1] = best.p;
			rec[BREC_GAP] = 0;
			rec[BREC_EFFICIENCY] = effOut[0];
			rec[BREC_CLEARANCE] = clearance;
			rec[BREC_LENGTH] = part.thicknessMm;
			rec[BREC_PARTS] = 1;
			kept.push(rec);
			offerBest(progress, e, -1, progressScore(effOut[0], clearance, p.minClearance, part.thicknessMm));
			bestKeys.add(efficiencyKey(effOut[0]), clearanceClass(clearance, p.minClearance), part.thicknessMm);
		}
	}
	if (p.maxElements >= 2) {
		const F = new Float64Array(n),
			H1 = new Float64Array(n),
			H2 = new Float64Array(n),
			T = new Float64Array(n);
		const cls1 = new Int8Array(n).fill(-1),
			cls2 = new Int8Array(n).fill(-1);
		for (let k = 0; k < n; k++) {
			const th = thin[k];
			if (!th) continue;
			F[k] = th.fMm;
			H1[k] = th.h1Mm;
			H2[k] = th.h2Mm;
			T[k] = parts[k]!.thicknessMm;
			if (ub1[k] > -Infinity) cls1[k] = clearanceClass(ub1[k], p.minClearance);
			if (ub2[k] > -Infinity) cls2[k] = clearanceClass(ub2[k], p.minClearance);
		}
		const z0 = p.inRayleighMm,
			zt = p.targetRayleighMm;
		const rows: number[] = [];
		for (let m1 = input.shardIndex; m1 < n; m1 += input.shardCount) if (cls1[m1] >= 0) rows.push(m1);
		const col: number[] = [];
		for (let k = 0; k < n; k++) if (cls2[k] >= 0) col.push(k);
		// Second parts by their share of the length bound (ascending), per level of the row's Rayleigh
		// range, so a row stops at the first column that cannot reach the limits (see sweepPairs).
		const levels = columnLevels(col, cls2, z2lo, z2hi, F, H1, T, zt, (k) => partIndex[candidates[k]]);
		const cols = Int32Array.from(col);
		const capacity = Number.isFinite(input.topK) ? beamKernelOptions.bufferCapacity : Infinity;
		// Seeds: the thinnest parts. Their pairs are solved first, so the K-th best key is already tight
		// when the sweep starts, and the sweep skips most pairs by their thicknesses alone.
		const seed = new Uint8Array(n);
		if (Number.isFinite(input.topK)) {
			const byThickness = Array.from({ length: n }, (_, k) => k)
				.filter((k) => cls1[k] >= 0 || cls2[k] >= 0)
				.sort((x, y) => T[x] - T[y] || x - y);
			for (const k of byThickness.slice(0, SEED_COUNT)) seed[k] = 1;
		}
		let buf: Int32Array = new Int32Array(0),
			bufBin: Int16Array = new Int16Array(0);
		let count = 0;
		let swept = -1; // bins ≤ swept are complete in the buffer
		const sweep = (fromBin: number): void => {
			const r = sweepPairs(
				{ rows, levels, z1lo, z1hi, z2lo, z2hi, F, H1, H2, T, cls1, cls2, partIndex, candidates, partUnits, seed, bestKeys, progress },
				n,
				z0,
				zt,
				p.minGapMm,
				fromBin,
				capacity,
				input.deadline,
				cancel
			);
			buf = r.buf;
			bufBin = r.bufBin;
			count = r.count;
			swept = r.cap;
			if (r.truncated) truncated = true;
		};
		const evaluatePair = (k1: number, k2: number, b: number): void => {
			counters[0]++;
			const cls = cls1[k1] < cls2[k2] ? cls1[k1] : cls2[k2];
			if (bestKeys.excludes(1e6, cls, binLowerLength(b))) return;
			const lo = z1lo[k1] > z2lo[k2] ? z1lo[k1] : z2lo[k2],
				hi = z1hi[k1] < z2hi[k2] ? z1hi[k1] : z2hi[k2];
			const e1 = candidates[k1],
				e2 = candidates[k2];
			const part1 = parts[k1]!,
				part2 = parts[k2]!;
			const roots = pairMatchRoots(beams, part1, part2, lo, hi);
			for (const r of roots) {
				counters[1]++;
				const last = r.p1Mm + part1.thicknessMm + r.gapMm + part2.thicknessMm;
				const d = p.targetZMm - last;
				if (!(r.p1Mm >= 0)) continue;
				// Its length is known now: a root that ranks after the K-th even as an exact match with its
				// pair's best clearance class is skipped before the physical checks and the walk.
				if (bestKeys.excludes(1e6, cls, last - r.p1Mm)) continue;
				if ((checkPairPhysical(packed, e1, e2, r.p1Mm + p.minWorkingDistanceMm, r.gapMm, d, p.minWorkingDistanceMm, p.minGapMm) & ~PHYS_OBJECT_PLANE) !== 0) continue;
				const clearance = walk(packed, p, e1, r.p1Mm, e2, r.gapMm, effOut);
				if (!(clearance >= p.minClearance * (1 - 1e-12))) continue;
				counters[2]++;
				rec[BREC_I] = e1;
				rec[BREC_J] = e2;
				rec[BREC_P1] = r.p1Mm;
				rec[BREC_GAP] = r.gapMm;
				rec[BREC_EFFICIENCY] = effOut[0];
				rec[BREC_CLEARANCE] = clearance;
				rec[BREC_LENGTH] = last - r.p1Mm;
				rec[BREC_PARTS] = 2;
				kept.push(rec);
				offerBest(progress, e1, e2, progressScore(effOut[0], clearance, p.minClearance, last - r.p1Mm));
				bestKeys.add(efficiencyKey(effOut[0]), clearanceClass(clearance, p.minClearance), last - r.p1Mm);
			}
		};
		for (const k1 of rows) {
			if (seed[k1] !== 1) continue;
			const part1 = partIndex[candidates[k1]];
			for (const k2 of cols) {
				if (seed[k2] !== 1 || (partIndex[candidates[k2]] === part1 && partUnits[part1] < 2)) continue;
				const lo = z1lo[k1] > z2lo[k2] ? z1lo[k1] : z2lo[k2],
					hi = z1hi[k1] < z2hi[k2] ? z1hi[k1] : z2hi[k2];
				if (!(lo <= hi)) continue;
				const len = pairLengthBound(F[k1], H1[k1], H2[k1], T[k1], F[k2], H1[k2], H2[k2], T[k2], z0, zt, lo, hi, p.minGapMm);
				if (len === Infinity) continue;
				const cls = cls1[k1] < cls2[k2] ? cls1[k1] : cls2[k2];
				evaluatePair(k1, k2, rankBin(cls, len));
			}
		}
		let done = -1;
		while (!truncated && done < RANK_BINS - 1) {
			sweep(done);
			if (truncated) break;
			// Counting sort of the buffer by bin, then the pairs in rank order.
			const start = new Int32Array(RANK_BINS + 1);
			for (let r = 0; r < count; r++) start[bufBin[r] + 1]++;
			for (let x = 0; x < RANK_BINS; x++) start[x + 1] += start[x];
			const order = new Int32Array(count);
			const at = start.slice(0, RANK_BINS);
			for (let r = 0; r < count; r++) order[at[bufBin[r]]++] = r;
			let closed = false;
			let lastBin = done;
			for (let o = 0; o < count; o++) {
				const r = order[o];
				const b = bufBin[r];
				if (b !== lastBin) {
					if (bestKeys.excludes(1e6, 2 - Math.floor(b / LENGTH_BINS), binLowerLength(b))) {
						closed = true;
						break;
					}
					lastBin = b;
					if (Date.now() > input.deadline || (cancel !== null && Atomics.load(cancel, 0) !== 0)) {
						truncated = true;
						break;
					}
				}
				const code = buf[r];
				evaluatePair(Math.floor(code / n), code % n, b);
				if (progress !== null && (o & 255) === 0) progress[PG_FRACTION] = 0.5 + (0.5 * o) / count;
			}
			if (closed || truncated) break;
			done = swept;
			if (done < RANK_BINS - 1 && bestKeys.excludes(1e6, 2 - Math.floor((done + 1) / LENGTH_BINS), binLowerLength(done + 1))) break;
		}
	}
	kept.prune();
	if (progress !== null && !truncated) progress[PG_FRACTION] = 1;
	return {
		records: kept.data,
		count: kept.count,
		configurationsEvaluated: counters[0],
		rootsFound: counters[1],
		physicalRoots: counters[2],
		truncated
	};
}
