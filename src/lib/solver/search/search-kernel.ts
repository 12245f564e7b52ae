/**
 * The search over one shard of the candidate elements: every single element and every
 * ordered pair (first element in this shard), closed-form roots from the optics core's
 * kernels, the physical filter, then a cheap screen (paraxial marginal and chief rays
 * against the clear apertures, third-order spherical aberration) that keeps the best K.
 *
 * Runs in a worker thread (search-worker.ts) and, for tests, on the main thread. Reads
 * only typed arrays; allocates nothing per configuration. No framework or database imports.
 */
import {
	ELEMENT_STRIDE,
	EL_A,
	EL_B,
	EL_C,
	EL_D,
	EL_THICKNESS,
	EL_SEMI_APERTURE
} from '../../optics/snapshot';
import {
	solveSingleKernel,
	singleAtMagnification,
	solvePairKernel,
	ROOT_STRIDE,
	ROOT_OBJECT_DISTANCE,
	ROOT_GAP,
	ROOT_BACK_DISTANCE,
	ROOT_MAGNIFICATION,
	ROOT_FLAGS,
	ROOT_NON_PHYSICAL
} from '../../optics/imaging';
import { checkSinglePhysical, checkPairPhysical } from '../../optics/physical';
import { evalSeidel } from './seidel-poly';
import { offerBest, PG_FRACTION } from './progress';
import { rankBound, boundUpper, boundFan, firstSurfaceCuts, CLASS_TWO_KEY, BOUND_CHEAP, BOUND_FULL, type BoundQuestion, type RayTable } from './rank-bound';
import { packRankParts, WORKING_DISTANCE_STEP_MM } from '../ranking';
import { VERIFY_A_TOL, VERIFY_B_TOL_MM } from '../../optics/tolerances';
import { partnerIndex, partnerRanges, type PartnerIndex } from './partner-index';
import type { ParsedImagingRequest } from '../request';

/** Numbers per candidate record. */
export const REC_STRIDE = 13;
export const REC_I = 0;
/** Second element, −1 for a single part. */
export const REC_J = 1;
export const REC_S = 2;
export const REC_G = 3;
export const REC_D = 4;
export const REC_M = 5;
export const REC_FLAGS = 6;
/**
 * Lower is better. The screening pass: the screen score (third-order spot over Airy, times
 * aperture penalties). The bounding pass (`boundRange` given): a lower bound of the answer's
 * ranking key, packed (`packRankParts`; rank-bound.ts).
 */
export const REC_SCORE = 7;
/** Largest paraxial marginal-ray height over clear semi-aperture. */
export const REC_FILL_AXIAL = 8;
/** Largest paraxial (marginal + chief) height over clear semi-aperture. */
export const REC_FILL_EDGE = 9;
/** Third-order transverse spherical aberration estimate, mm (RMS at the paraxial focus). */
export const REC_SA_MM = 10;
/** 1 when an element of the configuration is a black box (no surfaces). */
export const REC_UNTRACEABLE = 11;
/** Object plane to target plane of this placement, mm (the track asked, or one within its tolerance). */
export const REC_TRACK = 12;

/** Score offset that puts configurations with a black-box part behind every traceable one. */
export const UNTRACEABLE_OFFSET = 1e6;

/** The question as the kernel needs it (plain numbers). */
export interface SearchParams {
	trackMm: number;
	/** A placement may use any track within trackMm ± this, mm (0: exactly trackMm). */
	trackToleranceMm: number;
	magnification: number;
	magnificationTolerance: number;
	objectNA: number;
	objectHeightMm: number;
	minGapMm: number;
	minWorkingDistanceMm: number;
	maxElements: number;
	wavelengthNm: number;
	/** Ranked over the colour band (the spot bound is then 0). */
	rankByBand: boolean;
	/** Answers asked for (N): the bounding pass's bar is the N-th best key. */
	limit: number;
}

/** The question as the search kernel reads it. */
export function searchParamsOf(req: ParsedImagingRequest): SearchParams {
	return {
		trackMm: req.trackMm,
		trackToleranceMm: req.trackToleranceMm,
		magnification: req.magnification,
		magnificationTolerance: req.magnificationTolerance,
		objectNA: req.objectNA,
		objectHeightMm: req.objectHeightMm,
		minGapMm: req.minGapMm,
		minWorkingDistanceMm: req.minWorkingDistanceMm,
		maxElements: req.maxElements,
		wavelengthNm: req.wavelengthNm,
		rankByBand: req.rankBy === 'band',
		limit: req.limit
	};
}

/** What one shard found. */
export interface ShardResult {
	/** REC_STRIDE numbers per kept candidate, best first. */
	records: Float64Array;
	count: number;
	configurationsEvaluated: number;
	rootsFound: number;
	physicalRoots: number;
	truncated: boolean;
}

/** Inputs of `searchShard`. */
/** The element snapshot's arrays every search reads (elements.ts builds them; the pool sends them to each worker once per key). */
export interface SnapshotArrays {
	packed: Float64Array;
	seidel: Float64Array;
	/** Part index of each element. */
	partIndex: Int32Array;
	/** 1 for an element without surfaces. */
	untraceable: Uint8Array;
	/** The elements' surfaces for the rank bound's real rays. */
	rays: RayTable;
	/** 1 for an element whose part is used outside its coating band at the wavelength. */
	coatOut: Uint8Array;
}

/** Only the arrays of a snapshot (never its element objects: this is what is posted to a worker). */
export function snapshotArrays(s: SnapshotArrays): SnapshotArrays {
	return { packed: s.packed, seidel: s.seidel, partIndex: s.partIndex, untraceable: s.untraceable, rays: s.rays, coatOut: s.coatOut };
}

export interface ShardInput extends SnapshotArrays {
	/** Units a setup may use of each part (a part may appear twice only with ≥ 2). */
	partUnits: Int32Array;
	/** Element indices allowed in this search. */
	candidates: Int32Array;
	params: SearchParams;
	shardIndex: number;
	shardCount: number;
	/** Keep this many best candidates (Infinity: keep every physical root, for tests). */
	topK: number;
	/**
	 * Null: the screening pass, candidates ranked by the screen score. Else the bounding pass:
	 * every physical root whose rank bound lies in [min, max], the best `topK` bounds kept.
	 */
	boundRange?: { min: number; max: number } | null;
	/** Stop (truncated) after this time (Date.now() ms). */
	deadline: number;
	/** Stop when cancel[0] becomes non-zero (SharedArrayBuffer from the pool). */
	cancel?: Int32Array | null;
	/** This shard's progress slot (progress.ts): rows done and the best candidate so far. */
	progress?: Float64Array | null;
	/**
	 * Visit every partner of every row (tests and benchmarks): without it, a row visits only the
	 * partners whose power can give a physical root (partner-index.ts). The roots are the same.
	 */
	bruteForce?: boolean;
}

/** The running shard's progress slot (one shard at a time per thread). */
let progressOut: Float64Array | null = null;

const roots = new Float64Array(2 * ROOT_STRIDE);
/** Scratch for the screen: fills and the spherical estimate. */
const screenOut = new Float64Array(3);

/**
 * Paraxial screen of a placement (s, g, d) of element i (then j, or j < 0): marginal ray
 * from the axial object point at slope tan(asin NA), chief ray from the field edge aimed at
 * the first vertex, heights at each element's vertices against its clear semi-aperture;
 * the elements' Seidel quartics give S_I and δy' = S_I / (2u'). Writes
 * [fillAxial, fillEdge, rmsSphericalMm] into screenOut.
 */
function screen(packed: Float64Array, seidel: Float64Array, i: number, j: number, s: number, g: number, p: SearchParams): void {
	const na = p.objectNA;
	const u0 = na / Math.sqrt(1 - na * na);
	const h = p.objectHeightMm;
	let o = i * ELEMENT_STRIDE;
	// Marginal (y, u) and chief (yc, uc) at the first vertex.
	let y = s * u0,
		u = u0;
	let uc = s > 0 ? -h / s : 0,
		yc = 0;
	let semi = packed[o + EL_SEMI_APERTURE];
	let fillA = 0,
		fillE = 0;
	if (semi > 0) {
		fillA = Math.abs(y) / semi;
		fillE = (Math.abs(y) + Math.abs(yc)) / semi;
	}
	let si = evalSeidel(seidel, i, y, u);
	let a = packed[o + EL_A],
		b = packed[o + EL_B],
		c = packed[o + EL_C],
		dd = packed[o + EL_D];
	let y2 = a * y + b * u,
		u2 = c * y + dd * u;
	let yc2 = a * yc + b * uc,
		uc2 = c * yc + dd * uc;
	if (semi > 0) {
		fillA = Math.max(fillA, Math.abs(y2) / semi);
		fillE = Math.max(fillE, (Math.abs(y2) + Math.abs(yc2)) / semi);
	}
	if (j >= 0) {
		y = y2 + g * u2;
		u = u2;
		yc = yc2 + g * uc2;
		uc = uc2;
		o = j * ELEMENT_STRIDE;
		semi = packed[o + EL_SEMI_APERTURE];
		if (semi > 0) {
			fillA = Math.max(fillA, Math.abs(y) / semi);
			fillE = Math.max(fillE, (Math.abs(y) + Math.abs(yc)) / semi);
		}
		si += evalSeidel(seidel, j, y, u);
		a = packed[o + EL_A];
		b = packed[o + EL_B];
		c = packed[o + EL_C];
		dd = packed[o + EL_D];
		y2 = a * y + b * u;
		u2 = c * y + dd * u;
		yc2 = a * yc + b * uc;
		if (semi > 0) {
			fillA = Math.max(fillA, Math.abs(y2) / semi);
			fillE = Math.max(fillE, (Math.abs(y2) + Math.abs(yc2)) / semi);
		}
	}
	screenOut[0] = fillA;
	screenOut[1] = fillE;
	// δy' at the paraxial focus; for δy' = Tρ³ over a uniform pupil the RMS is T/2.
	screenOut[2] = Math.abs(u2) > 1e-15 ? Math.abs(si / (2 * u2)) / 2 : Infinity;
}

/**
 * The spherical part of `screen` alone (marginal ray only): RMS of the third-order
 * transverse aberration at the paraxial focus, mm, for a pair placement (s, g) of i then j.
 */
function sphericalRms(packed: Float64Array, seidel: Float64Array, i: number, j: number, s: number, g: number, u0: number): number {
	let o = i * ELEMENT_STRIDE;
	const y1 = s * u0;
	const si1 = evalSeidel(seidel, i, y1, u0);
	const y1b = packed[o + EL_A] * y1 + packed[o + EL_B] * u0,
		u1b = packed[o + EL_C] * y1 + packed[o + EL_D] * u0;
	const y2 = y1b + g * u1b;
	o = j * ELEMENT_STRIDE;
	const si = si1 + evalSeidel(seidel, j, y2, u1b);
	const uf = packed[o + EL_C] * y2 + packed[o + EL_D] * u1b;
	return Math.abs(uf) > 1e-15 ? Math.abs(si / (2 * uf)) / 2 : Infinity;
}

/**
 * A fixed-size max-heap of records keyed by REC_SCORE: the root is the worst kept record,
 * so a better newcomer replaces it in O(log K).
 */
class TopK {
	readonly data: Float64Array;
	count = 0;
	readonly cap: number;
	private readonly grow: boolean;
	constructor(k: number) {
		this.grow = !Number.isFinite(k);
		this.cap = this.grow ? 1024 : Math.max(1, k);
		this.data = new Float64Array(this.cap * REC_STRIDE);
	}
	private buf: Float64Array | null = null;
	get records(): Float64Array {
		return this.buf ?? this.data;
	}
	/** True when a record with this score would be kept. */
	admits(score: number): boolean {
		return this.grow || this.count < this.cap || score < this.records[REC_SCORE];
	}
	push(rec: Float64Array): void {
		if (this.grow) {
			let b = this.records;
			if ((this.count + 1) * REC_STRIDE > b.length) {
				const nb = new Float64Array(b.length * 2);
				nb.set(b);
				this.buf = b = nb;
			}
			b.set(rec, this.count * REC_STRIDE);
			this.count++;
			return;
		}
		const d = this.data;
		if (this.count < this.cap) {
			let k = this.count++;
			d.set(rec, k * REC_STRIDE);
			while (k > 0) {
				const parent = (k - 1) >> 1;
				if (d[parent * REC_STRIDE + REC_SCORE] >= d[k * REC_STRIDE + REC_SCORE]) break;
				this.swap(k, parent);
				k = parent;
			}
			return;
		}
		if (!(rec[REC_SCORE] < d[REC_SCORE])) return;
		d.set(rec, 0);
		let k = 0;
		for (;;) {
			const l = 2 * k + 1,
				r = l + 1;
			let big = k;
			if (l < this.count && d[l * REC_STRIDE + REC_SCORE] > d[big * REC_STRIDE + REC_SCORE]) big = l;
			if (r < this.count && d[r * REC_STRIDE + REC_SCORE] > d[big * REC_STRIDE + REC_SCORE]) big = r;
			if (big === k) break;
			this.swap(k, big);
			k = big;
		}
	}
	private swap(a: number, b: number): void {
		const d = this.data;
		const oa = a * REC_STRIDE,
			ob = b * REC_STRIDE;
		for (let q = 0; q < REC_STRIDE; q++) {
			const t = d[oa + q];
			d[oa + q] = d[ob + q];
			d[ob + q] = t;
		}
	}
	/** The kept records sorted best first. */
	sorted(): Float64Array {
		const n = this.count;
		const src = this.records;
		const order = Array.from({ length: n }, (_, k) => k).sort((x, y) => src[x * REC_STRIDE + REC_SCORE] - src[y * REC_STRIDE + REC_SCORE]);
		const out = new Float64Array(n * REC_STRIDE);
		order.forEach((k, q) => out.set(src.subarray(k * REC_STRIDE, (k + 1) * REC_STRIDE), q * REC_STRIDE));
		return out;
	}
}

/** Airy radius at the image for magnification m: 0.61·λ·|m|/NA (mm); see optics/spot.ts airyRadiusMm. */
export function airyForMagnification(wavelengthNm: number, objectNA: number, m: number): number {
	return (0.61 * wavelengthNm * 1e-6 * Math.abs(m)) / objectNA;
}

/** Screen score of a candidate from its estimate and fills (lower is better). */
function scoreOf(saMm: number, airyMm: number, fillA: number, fillE: number, untraceable: boolean): number {
	let score = saMm / airyMm;
	if (fillA > 1) score = (score + 1) * 4 * fillA;
	else if (fillE > 1) score = (score + 1) * 1.5 * fillE;
	return untraceable ? UNTRACEABLE_OFFSET + score : score;
}

/** Counters of a search: configurations evaluated, roots found, physical roots. */
const counters = new Float64Array(3);
const rec = new Float64Array(REC_STRIDE);

/**
 * Offers one physical root (in `roots` at `base`) to the top-K. Screening pass: by the screen
 * score. Bounding pass: by its rank bound, the cheap bound first and the exact axial one only when
 * the cheap one would be kept.
 */
function consider(ctx: ShardContext, i: number, j: number, base: number, untr: boolean, trackMm: number): void {
	const { packed, seidel, p, top, rays, coatOut, boundQ, range } = ctx;
	const s = roots[base + ROOT_OBJECT_DISTANCE],
		g = roots[base + ROOT_GAP],
		d = roots[base + ROOT_BACK_DISTANCE],
		mAch = roots[base + ROOT_MAGNIFICATION];
	let key: number;
	if (range === null) {
		screen(packed, seidel, i, j, s, g, p);
		key = scoreOf(screenOut[2], airyForMagnification(p.wavelengthNm, p.objectNA, mAch), screenOut[0], screenOut[1], untr);
		if (!top.admits(key)) return;
	} else {
		const coat = coatOut[i] | (j >= 0 ? coatOut[j] : 0);
		// Beyond its first-surface cut the first element loses the cone (class 2): no ray needed.
		if (!untr && s > ctx.firstCut[i] && CLASS_TWO_KEY > ctx.bar) return;
		// The cheap tier, then (when it may still rank) the full one; a black box's key is exact at once.
		key = rankBound(rays, packed, boundQ, i, j, s, g, d, mAch, untr, coat, BOUND_CHEAP, ctx.bar);
		const exact = untr || boundUpper[0] !== Infinity;
		if (!exact && key <= ctx.bar && top.admits(key)) key = rankBound(rays, packed, boundQ, i, j, s, g, d, mAch, untr, coat, BOUND_FULL, ctx.bar, boundFan[0]);
		if (key > ctx.bar || key < range.min || !top.admits(key)) return;
		if (boundUpper[0] < ctx.bar && answerCheck(packed, i, j, s, g, d, p.magnification)) lowerBar(ctx, boundUpper[0]);
		screen(packed, seidel, i, j, s, g, p);
	}
	rec[REC_I] = i;
	rec[REC_J] = j;
	rec[REC_S] = s;
	rec[REC_G] = g;
	rec[REC_D] = d;
	rec[REC_M] = mAch;
	rec[REC_FLAGS] = roots[base + ROOT_FLAGS];
	rec[REC_SCORE] = key;
	rec[REC_FILL_AXIAL] = screenOut[0];
	rec[REC_FILL_EDGE] = screenOut[1];
	rec[REC_SA_MM] = screenOut[2];
	rec[REC_UNTRACEABLE] = untr ? 1 : 0;
	rec[REC_TRACK] = trackMm;
	top.push(rec);
	offerBest(progressOut, i, j, key);
}

/**
 * True when the placement is surely an answer: the evaluation's matrix check (evaluate.ts,
 * VERIFY_B_TOL_MM and VERIFY_A_TOL from optics/tolerances.ts) passes with half its tolerance, so rounding in the product's
 * order cannot fail it there. Pairs must hit the magnification asked; a single only focuses.
 */
function answerCheck(packed: Float64Array, i: number, j: number, s: number, g: number, d: number, m: number): boolean {
	let o = i * ELEMENT_STRIDE;
	// Element i after the object distance: [A B; C D] = E_i · P(s).
	let A = packed[o + EL_A],
		B = packed[o + EL_A] * s + packed[o + EL_B],
		C = packed[o + EL_C],
		D = packed[o + EL_C] * s + packed[o + EL_D];
	if (j >= 0) {
		A += g * C;
		B += g * D;
		o = j * ELEMENT_STRIDE;
		const a = packed[o + EL_A],
			b = packed[o + EL_B],
			c = packed[o + EL_C],
			dd = packed[o + EL_D];
		const A2 = a * A + b * C,
			B2 = a * B + b * D;
		C = c * A + dd * C;
		D = c * B + dd * D;
		A = A2;
		B = B2;
	}
	A += d * C;
	B += d * D;
	if (!(Math.abs(B) <= 0.5 * VERIFY_B_TOL_MM)) return false;
	return j < 0 || Math.abs(A - m) <= 0.5 * VERIFY_A_TOL * Math.max(1, Math.abs(A));
}

/** Counts an answer's upper key towards the shard's N best and lowers the bar to the N-th of them. */
function lowerBar(ctx: ShardContext, upper: number): void {
	const b = ctx.barKeys;
	const n = ctx.p.limit;
	let k = b.length;
	while (k > 0 && b[k - 1] > upper) k--;
	if (k >= n) return;
	b.splice(k, 0, upper);
	if (b.length > n) b.pop();
	if (b.length === n) ctx.bar = Math.min(ctx.bar, b[n - 1]);
}

/** Every single element of the candidates. */
function singles(ctx: ShardContext): void {
	const { packed, untraceable, candidates, p } = ctx;
	const m = p.magnification;
	const tol = p.trackToleranceMm;
	for (let q = 0; q < candidates.length; q++) {
		const i = candidates[q];
		counters[0]++;
		// The track asked first; with a tolerance and nothing there, the track within it nearest
		// to the one that gives exactly m (|m| is monotone in the track on each branch, so that
		// is where the magnification comes closest to m).
		if (singlesAt(ctx, i, p.trackMm) || !(tol > 0)) continue;
		const exactTrack = singleAtMagnification(packed, i, m, roots, 0);
		if (!Number.isFinite(exactTrack)) continue;
		if (Math.abs(exactTrack - p.trackMm) <= tol) {
			// Exactly m at its own track: the root is already written.
			counters[1]++;
			if ((roots[ROOT_FLAGS] & ROOT_NON_PHYSICAL) !== 0) continue;
			if (checkSinglePhysical(packed, i, roots[ROOT_OBJECT_DISTANCE], roots[ROOT_BACK_DISTANCE], p.minWorkingDistanceMm) !== 0) continue;
			counters[2]++;
			consider(ctx, i, -1, 0, untraceable[i] === 1, exactTrack);
		} else {
			singlesAt(ctx, i, exactTrack > p.trackMm ? p.trackMm + tol : p.trackMm - tol);
		}
	}
}

/** The placements of single element i at one track that meet the magnification tolerance and the limits; true when one was offered. */
function singlesAt(ctx: ShardContext, i: number, trackMm: number): boolean {
	const { packed, untraceable, p } = ctx;
	const k = solveSingleKernel(packed, i, trackMm, roots, 0);
	let found = false;
	for (let r = 0; r < k; r++) {
		const base = r * ROOT_STRIDE;
		counters[1]++;
		if ((roots[base + ROOT_FLAGS] & ROOT_NON_PHYSICAL) !== 0) continue;
		const mAch = roots[base + ROOT_MAGNIFICATION];
		if (!(Math.abs(mAch / p.magnification - 1) <= p.magnificationTolerance)) continue;
		if (checkSinglePhysical(packed, i, roots[base + ROOT_OBJECT_DISTANCE], roots[base + ROOT_BACK_DISTANCE], p.minWorkingDistanceMm) !== 0) continue;
		counters[2]++;
		consider(ctx, i, -1, base, untraceable[i] === 1, trackMm);
		found = true;
	}
	return found;
}

/** The element matrices as separate arrays, with 1/C (0 for afocal elements), for the prefilter. */
interface Soa {
	a: Float64Array;
	b: Float64Array;
	c: Float64Array;
	d: Float64Array;
	t: Float64Array;
	rc: Float64Array;
}

function toSoa(packed: Float64Array): Soa {
	const n = packed.length / ELEMENT_STRIDE;
	const soa = { a: new Float64Array(n), b: new Float64Array(n), c: new Float64Array(n), d: new Float64Array(n), t: new Float64Array(n), rc: new Float64Array(n) };
	for (let k = 0; k < n; k++) {
		const o = k * ELEMENT_STRIDE;
		soa.a[k] = packed[o + EL_A];
		soa.b[k] = packed[o + EL_B];
		soa.c[k] = packed[o + EL_C];
		soa.d[k] = packed[o + EL_D];
		soa.t[k] = packed[o + EL_THICKNESS];
		soa.rc[k] = packed[o + EL_C] === 0 ? 0 : 1 / packed[o + EL_C];
	}
	return soa;
}

/**
 * What every step of one shard's search reads, built once per shard (`shardContext`): the
 * snapshot's arrays, the question, the top-K and the matrices as separate arrays.
 */
interface ShardContext extends SnapshotArrays, Pick<ShardInput, 'partUnits' | 'candidates'> {
	p: SearchParams;
	/** The question as the rank bound reads it. */
	boundQ: BoundQuestion;
	/** The bounding pass's window of bounds (null: the screening pass). */
	range: { min: number; max: number } | null;
	/**
	 * Bounding pass: no root with a bound above this can rank among the first N: the window's top,
	 * lowered to the N-th best key of the answers this shard has fully bounded (`lowerBar`).
	 */
	bar: number;
	/** Upper keys of this shard's best answers (at most `limit`), ascending. */
	barKeys: number[];
	/**
	 * Bounding pass: per element, the object distance beyond which it cuts the cone at its first
	 * surface (`firstSurfaceCuts`); Infinity everywhere in the screening pass.
	 */
	firstCut: Float64Array;
	/** Some candidate is a black box (its answers have no vignetting class: a pair with one is never cut). */
	anyUntraceable: boolean;
	/** Slack added to the prefilter's approximate working distance, mm (its roots are approximate). */
	wdSlack: number;
	top: TopK;
	/** The matrices as separate arrays; null when the question asks for single parts only. */
	soa: Soa | null;
	/** The partners sorted by power (partner-index.ts); null for the brute-force search or single parts only. */
	partners: PartnerIndex | null;
	/** The brute-force search's one range [0, candidates.length). */
	everyPartner: Int32Array;
	/** The prefilter's constants of the question: 1/m, m + 1/m, the limits less a slack, the Airy radius at m, the marginal slope. */
	im: number;
	mu: number;
	minS: number;
	minG: number;
	airyPair: number;
	u0: number;
}

/** The first-surface cuts of the candidates for a bounding pass (`firstSurfaceCuts`); Infinity for the screening pass. */
function firstCutsOf(input: ShardInput): Float64Array {
	const out = new Float64Array(input.packed.length / ELEMENT_STRIDE).fill(Infinity);
	if (input.boundRange) firstSurfaceCuts(input.rays, input.candidates, input.params.objectNA, out);
	return out;
}

function shardContext(input: ShardInput, top: TopK): ShardContext {
	const { packed, seidel, partIndex, untraceable, partUnits, candidates, rays, coatOut, params: p } = input;
	const soa = p.maxElements >= 2 ? toSoa(packed) : null;
	const m = p.magnification;
	const slack = 1e-6 * (Math.abs(p.trackMm) + 1);
	return {
		packed,
		seidel,
		partIndex,
		untraceable,
		partUnits,
		candidates,
		rays,
		coatOut,
		p,
		boundQ: { objectNA: p.objectNA, objectHeightMm: p.objectHeightMm, wavelengthNm: p.wavelengthNm, byBand: p.rankByBand },
		range: input.boundRange ?? null,
		bar: input.boundRange ? input.boundRange.max : Infinity,
		barKeys: [],
		firstCut: firstCutsOf(input),
		anyUntraceable: candidates.some((e) => untraceable[e] === 1),
		wdSlack: 1e-6 * (Math.abs(p.trackMm) + 1),
		top,
		soa,
		partners: soa !== null && !input.bruteForce ? partnerIndex(packed, candidates) : null,
		everyPartner: Int32Array.of(0, candidates.length),
		im: 1 / m,
		mu: m + 1 / m,
		minS: p.minWorkingDistanceMm - slack,
		minG: p.minGapMm - slack,
		airyPair: airyForMagnification(p.wavelengthNm, p.objectNA, m),
		u0: p.objectNA / Math.sqrt(1 - p.objectNA * p.objectNA)
	};
}


/**
 * The track nearest to `trackMm`, within ± tol, at which a pair's gap quadratic (coefficients C₁,
 * qb, discriminant disc < 0 at trackMm) has a real root; NaN when none. Moving the track by δ
 * moves qb by −C₁δ and qc by −C₀δ, so the discriminant is the quadratic
 * C₁²δ² + (4C₁C₀ − 2·qb·C₁)δ + disc in δ, negative between its two zeros. The track returned
 * lies a hair past the nearer zero, so that the kernel sees two close real roots. (Kept out of
 * `pairRow`: a cold path that would make the hot loop too large to optimise.)
 */
function toleranceTrack(qb: number, C0: number, C1: number, disc: number, tol: number, trackMm: number): number {
	const beta = 4 * C1 * C0 - 2 * qb * C1,
		alpha = C1 * C1;
	const sq = Math.sqrt(beta * beta - 4 * alpha * disc);
	const up = (-beta + sq) / (2 * alpha),
		down = (-beta - sq) / (2 * alpha);
	let delta = Math.abs(up) <= Math.abs(down) ? up : down;
	if (!(Math.abs(delta) <= tol)) return NaN;
	const nudge = Math.min(tol - Math.abs(delta), 1e-6 * (Math.abs(trackMm) + 1));
	delta += delta >= 0 ? nudge : -nudge;
	return trackMm + delta;
}

/** Scratch of `settlePairTrack`: [the track settled on]. */
const settled = new Float64Array(1);

/**
 * The pair's roots at `track` (k of them in `roots`) when one is physical; else, when the window's
 * edge on that side has a physical root, the roots at the nearest track to `track` that has one
 * (bisection between the two: the double root broke a limit, a working distance or the gap).
 * Returns the root count (0: none) and leaves the track in settled[0].
 */
function settlePairTrack(ctx: ShardContext, i: number, j: number, track: number, k: number): number {
	const { packed, p } = ctx;
	settled[0] = track;
	if (anyPhysicalPair(ctx, i, j, k)) return k;
	const m = p.magnification;
	const edge = track > p.trackMm ? p.trackMm + p.trackToleranceMm : p.trackMm - p.trackToleranceMm;
	if (!anyPhysicalPair(ctx, i, j, solvePairKernel(packed, i, j, edge, m, roots, 0))) return 0;
	let near = track,
		far = edge;
	for (let it = 0; it < 60 && Math.abs(far - near) > 1e-9 * (Math.abs(p.trackMm) + 1); it++) {
		const mid = 0.5 * (near + far);
		if (anyPhysicalPair(ctx, i, j, solvePairKernel(packed, i, j, mid, m, roots, 0))) far = mid;
		else near = mid;
	}
	settled[0] = far;
	return solvePairKernel(packed, i, j, far, m, roots, 0);
}

/** True when one of the k pair roots in `roots` passes the physical filter. */
function anyPhysicalPair(ctx: ShardContext, i: number, j: number, k: number): boolean {
	const { packed, p } = ctx;
	for (let r = 0; r < k; r++) {
		const base = r * ROOT_STRIDE;
		if ((roots[base + ROOT_FLAGS] & ROOT_NON_PHYSICAL) !== 0) continue;
		if (checkPairPhysical(packed, i, j, roots[base + ROOT_OBJECT_DISTANCE], roots[base + ROOT_GAP], roots[base + ROOT_BACK_DISTANCE], p.minWorkingDistanceMm, p.minGapMm) === 0) return true;
	}
	return false;
}

/** Every ordered pair with element i first. */
function pairRow(ctx: ShardContext, i: number): void {
	const { packed, seidel, partIndex, untraceable, partUnits, candidates, coatOut, p, top, range, mu, im, minS, minG, wdSlack, airyPair, u0 } = ctx;
	const soa = ctx.soa as Soa;
	const m = p.magnification;
	const pi = partIndex[i];
	const tol = p.trackToleranceMm;
	const ui = untraceable[i] === 1;
	const ci = coatOut[i];
	const sa = soa.a,
		sb = soa.b,
		sc = soa.c,
		sd = soa.d,
		st = soa.t,
		src = soa.rc;
	const a1 = sa[i],
		b1 = sb[i],
		c1 = sc[i],
		d1 = sd[i];
	const rc1 = src[i];
	const lam1 = p.trackMm - st[i];
	// The partners to visit: ranges of the order by power that can give a physical root
	// (partner-index.ts), or every candidate for the brute-force search.
	const ix = ctx.partners;
	const order = ix === null ? candidates : ix.order;
	const ranges = ix === null ? ctx.everyPartner : ix.ranges;
	// Bounding pass: no root beyond the first element's cut can rank (unless a black box is about).
	const sMax = range !== null && !ctx.anyUntraceable && CLASS_TWO_KEY > ctx.bar ? ctx.firstCut[i] : Infinity;
	const nRanges = ix === null ? 1 : partnerRanges(ix, p, a1, b1, c1, d1, st[i], sMax);
	let evaluated = 0;
	for (let rg = 0; rg < nRanges; rg++) {
		const end = ranges[2 * rg + 1];
		for (let w = ranges[2 * rg]; w < end; w++) {
			const j = order[w];
			if (partIndex[j] === pi && partUnits[pi] < 2) continue;
			evaluated++;
			// Conservative prefilter, the same algebra as solvePairKernel (optics/imaging.ts):
			// skip the pair only when its gap quadratic clearly has no real root, or every
			// root clearly has a gap or a working distance below the minimum. Near a limit,
			// a double root or an afocal root the optics core's kernel decides. Measured hot
			// path (tests/bench/solver-3000.ts): most pairs never reach the full kernel, and
			// the test avoids divisions (one reciprocal per pair).
			const a2 = sa[j],
				b2 = sb[j],
				c2 = sc[j],
				d2 = sd[j];
			const lam = lam1 - st[j];
			const A0 = a2 * a1 + b2 * c1,
				A1 = a2 * c1,
				C0 = c2 * a1 + d2 * c1,
				C1 = c2 * c1,
				D0 = c2 * b1 + d2 * d1,
				D1 = c2 * d1;
			const qb = C0 - A1 - D1 - C1 * lam;
			const qc = mu - A0 - D0 - C0 * lam;
			let track = p.trackMm;
			if (C1 !== 0) {
				const disc = qb * qb - 4 * C1 * qc;
				const scale = qb * qb + 4 * Math.abs(C1 * qc);
				if (disc < -1e-6 * scale) {
					// No real root at the track asked: with a track tolerance, the nearest track that has one.
					if (!(tol > 0)) continue;
					track = toleranceTrack(qb, C0, C1, disc, tol, p.trackMm);
					if (track !== track) continue; // NaN: none within the tolerance
				} else if (disc > 1e-6 * scale) {
					const sq = Math.sqrt(disc);
					const qq = -0.5 * (qb + (qb >= 0 ? sq : -sq));
					// Roots g₀ = qq/C₁ = qq·(1/c₁)(1/c₂) and g₁ = qc/qq. A root that may be
					// physical is screened right here with its approximate (s, g): the full kernel
					// and the physical check run only when the top-K would keep it.
					let need = false;
					for (let r = 0; r < 2 && !need; r++) {
						const g = r === 0 ? qq * rc1 * src[j] : qc / qq;
						if (!(g >= minG)) continue;
						const kC = C0 + g * C1,
							kA = A0 + g * A1,
							kD = D0 + g * D1;
						const size = Math.abs(kA) + Math.abs(kD) + Math.abs(m) + Math.abs(im);
						if (!(Math.abs(kC) > 1e-9 * size)) {
							need = true; // nearly afocal: the kernel handles it
							break;
						}
						const lim = kC * kC * minS;
						if (!((im - kD) * kC >= lim && (m - kA) * kC >= lim)) continue;
						if (range === null) {
							// Lower bound of the screen score (aperture penalties only raise it).
							const bound = sphericalRms(packed, seidel, i, j, (im - kD) / kC, g, u0) / airyPair;
							need = top.admits((ui || untraceable[j] === 1 ? UNTRACEABLE_OFFSET + bound : bound) * (1 - 1e-9));
						} else {
							// Lower bound of the rank bound from what is exact without rays: coating, the
							// working-distance step (of the approximate root, with a slack) and part count.
							const wd = Math.min((im - kD) / kC, (m - kA) / kC) + wdSlack;
							const low = packRankParts(0, ci | coatOut[j], 0, -Math.floor(wd / WORKING_DISTANCE_STEP_MM), 2, 0);
							need = low <= ctx.bar && top.admits(low);
						}
					}
					if (!need) continue;
				}
			}
			offerPair(ctx, i, j, track);
		}
	}
	counters[0] += evaluated;
}

/**
 * The pair i then j that passed the prefilter: the optics core's kernel at `track` (settled
 * within the track tolerance when that is not the track asked), the physical filter, and
 * every physical root offered to the top-K.
 */
function offerPair(ctx: ShardContext, i: number, j: number, track: number): void {
	const { packed, untraceable, p } = ctx;
	let k = solvePairKernel(packed, i, j, track, p.magnification, roots, 0);
	if (track !== p.trackMm) {
		k = settlePairTrack(ctx, i, j, track, k);
		track = settled[0];
	}
	const untr = untraceable[i] === 1 || untraceable[j] === 1;
	for (let r = 0; r < k; r++) {
		const base = r * ROOT_STRIDE;
		counters[1]++;
		if ((roots[base + ROOT_FLAGS] & ROOT_NON_PHYSICAL) !== 0) continue;
		const bad = checkPairPhysical(
			packed,
			i,
			j,
			roots[base + ROOT_OBJECT_DISTANCE],
			roots[base + ROOT_GAP],
			roots[base + ROOT_BACK_DISTANCE],
			p.minWorkingDistanceMm,
			p.minGapMm
		);
		if (bad !== 0) continue;
		counters[2]++;
		consider(ctx, i, j, base, untr, track);
	}
}

/** Runs the search of one shard (see the module comment). */
export function searchShard(input: ShardInput): ShardResult {
	const top = new TopK(input.topK);
	counters.fill(0);
	progressOut = input.progress ?? null;
	let truncated = false;
	const cancel = input.cancel ?? null;
	const ctx = shardContext(input, top);
	// Single parts: shard 0 does them all (there are few).
	if (input.shardIndex === 0) singles(ctx);
	if (ctx.soa !== null) {
		const { candidates } = ctx;
		const rows = Math.max(1, Math.ceil((candidates.length - input.shardIndex) / input.shardCount));
		let done = 0;
		for (let q = input.shardIndex; q < candidates.length; q += input.shardCount) {
			if (Date.now() > input.deadline || (cancel !== null && Atomics.load(cancel, 0) !== 0)) {
				truncated = true;
				break;
			}
			pairRow(ctx, candidates[q]);
			if (progressOut) progressOut[PG_FRACTION] = ++done / rows;
		}
	}
	if (progressOut && !truncated) progressOut[PG_FRACTION] = 1;
	progressOut = null;
	return {
		records: top.sorted(),
		count: top.count,
		configurationsEvaluated: counters[0],
		rootsFound: counters[1],
		physicalRoots: counters[2],
		truncated
	};
}
