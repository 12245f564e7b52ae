/**
 * Build from stock, orchestrated: element snapshot (cached per stock key and wavelength),
 * candidate filter (available, kit, drawer), the search on the worker pool (or inline),
 * merge of the shards' best candidates, exact real-ray evaluation of the best few, ranking.
 * Database-free: `service.ts` loads the stock and calls `solveWithStock`.
 */
import { DomainError } from '../errors';
import { ROOT_DOUBLE, ROOT_FAMILY } from '../../optics/imaging';
import type { ParsedImagingRequest } from '../../solver/request';
import type { PartsExcluded, Solution, SolveProgress, SolveResponse, SolveStats } from '../../solver/types';
import { progressBuffer, readProgress } from '../../solver/search/progress';
import { imagingNoAnswer } from './near-track';
import { buildElementSnapshot, wavelengthCoveredByAnyMaterial, type CandidatePart, type ElementSnapshot } from './elements';
import {
	searchShard,
	REC_STRIDE,
	REC_I,
	REC_J,
	REC_S,
	REC_G,
	REC_D,
	REC_FLAGS,
	REC_SCORE,
	REC_SA_MM,
	REC_TRACK,
	searchParamsOf,
	snapshotArrays,
	type ShardResult
} from '../../solver/search/search-kernel';
import { searchOnPool, workerCount } from './pool';
import { evaluatePlacement, rankKey, compareKeys, type PlacementChoice } from './evaluate';
import { packRankKey } from '../../solver/ranking';
import { coatingExclusionReason, coatingWarnings, groupExcluded, outsideCoating } from './exclusions';

/** The answer with its coating warnings (parts in the order light meets them); none → no `warnings` key change. */
export function withCoatingWarnings<S extends { warnings?: Solution['warnings'] }>(s: S, parts: readonly CandidatePart[], wavelengthNm: number): S {
	const w = coatingWarnings(parts, wavelengthNm);
	return { ...s, warnings: [...(s.warnings ?? []).filter((x) => x.code !== 'coating-out-of-band'), ...w] };
}

/** Candidates each shard keeps in the screening pass. */
export const TOP_K_PER_SHARD = 400;
/** Candidates of the screening pass traced with real rays after the merge. */
export const TRACE_COUNT = 480;
/** How long the proof may run before a listener gets the screening pass's answers, ms. */
export const PROVISIONAL_AFTER_MS = 400;
/** Share of the progress bar the screening pass fills (the bounding passes fill the rest). */
const SCREEN_SHARE = 0.4;
/** Roots a shard keeps in a bounding pass (best bounds first); another pass fetches the rest if it fills. */
export const BOUND_PASS_K = 20000;

/** The stock the solver works on: a key that changes whenever it does, and its parts. */
export interface StockView {
	key: string;
	parts: CandidatePart[];
}

const snapshots = new Map<string, ElementSnapshot>();

/** The element snapshot of a stock at a wavelength, cached (a few entries). */
export function snapshotFor(stock: StockView, wavelengthNm: number): { key: string; snapshot: ElementSnapshot } {
	const key = `${stock.key}@${wavelengthNm}`;
	let snap = snapshots.get(key);
	if (!snap) {
		snap = buildElementSnapshot(stock.parts, wavelengthNm);
		snapshots.set(key, snap);
		while (snapshots.size > 6) snapshots.delete(snapshots.keys().next().value as string);
	}
	return { key, snapshot: snap };
}

/** Options of a solve. */
export interface SolveOptions {
	signal?: AbortSignal;
	/** Run the search on this thread (tests, brute-force comparison) instead of the pool. */
	inline?: boolean;
	/** Keep every physical root (inline only; tests). */
	keepAll?: boolean;
	/** Inline beam modes only (tests): run this many shards one after another, sharing their K-th key as the pool's workers do. */
	inlineShards?: number;
	/** Called a few times a second while the pool searches (not inline), with the fraction searched and the best so far. */
	onProgress?: (p: SolveProgress) => void;
	/** How often onProgress is called, ms (default 250). */
	progressEveryMs?: number;
	/** Imaging: called once with the screening pass's answers (stats.provisional) when the proof runs longer than PROVISIONAL_AFTER_MS. */
	onProvisional?: (r: SolveResponse) => void;
}

/**
 * Watches a pool search's progress buffer for `onProgress` (nothing when there is no listener): the caller passes
 * `buffer` to the pool and calls `stop()` when the search has ended. `describe` turns the best candidate's element
 * indices and score into what the client is shown.
 */
export function watchProgress(
	options: SolveOptions,
	shards: number,
	describe: (best: { i: number; j: number; score: number }) => SolveProgress['best']
): { buffer: SharedArrayBuffer | null; stop: () => void } {
	const listener = options.onProgress;
	if (!listener || options.inline) return { buffer: null, stop: () => {} };
	const buffer = progressBuffer(shards);
	const tell = () => {
		const { fraction, best } = readProgress(buffer, shards);
		listener({ fraction, best: best ? describe(best) : null });
	};
	const timer = setInterval(tell, options.progressEveryMs ?? 250);
	return {
		buffer,
		stop: () => {
			clearInterval(timer);
			tell();
		}
	};
}

/**
 * Which elements of the snapshot the question allows, and how many units each part may use; and the
 * parts the question's own filter (kit, drawer, available units) would take that are left out anyway,
 * with the reason (no index at the wavelength, or outside the coating band when the question leaves
 * those out): `stats.partsExcluded`. `onlyParts` narrows further (the in-band pass of mode beam).
 */
export function candidateFilter(
	snap: ElementSnapshot,
	req: Pick<ParsedImagingRequest, 'partIds' | 'locationIds' | 'availableOnly'> & { inCoatingBandOnly?: boolean },
	onlyParts?: (p: CandidatePart) => boolean
): { candidates: Int32Array; partUnits: Int32Array; parts: number; excluded: PartsExcluded[] } {
	const ids = req.partIds ? new Set(req.partIds) : null;
	const locs = req.locationIds ? new Set(req.locationIds) : null;
	const asked = (p: CandidatePart) => {
		if (ids && !ids.has(p.partId)) return false;
		if (locs && !p.locations.some((l) => locs.has(l.locationId) && l.quantity > 0)) return false;
		return !req.availableOnly || p.available > 0;
	};
	const out: { sku: string; reason: string }[] = [];
	for (const s of snap.skipped) if (asked(s.part)) out.push(s);
	const allowed = snap.parts.map((p) => {
		if (!asked(p)) return false;
		if (req.inCoatingBandOnly && outsideCoating(p, snap.wavelengthNm)) {
			out.push({ sku: p.sku, reason: coatingExclusionReason(snap.wavelengthNm) });
			return false;
		}
		return !onlyParts || onlyParts(p);
	});
	const partUnits = Int32Array.from(snap.parts.map((p) => (req.availableOnly ? p.available : Math.max(2, p.available))));
	const list: number[] = [];
	for (let e = 0; e < snap.elements.length; e++) if (allowed[snap.partIndex[e]]) list.push(e);
	return { candidates: Int32Array.from(list), partUnits, parts: allowed.filter(Boolean).length, excluded: groupExcluded(out) };
}

/** Solves the imaging question against `stock` (see the module comment). */
export async function solveWithStock(stock: StockView, req: ParsedImagingRequest, options: SolveOptions = {}): Promise<SolveResponse> {
	const t0 = performance.now();
	if (!wavelengthCoveredByAnyMaterial(stock.parts, req.wavelengthNm)) {
		throw new DomainError(400, 'invalid-input', 'Some fields are not valid.', {
			wavelengthNm: `No material of the catalogue has a known refractive index at ${req.wavelengthNm} nm.`
		});
	}
	const { key, snapshot: snap } = snapshotFor(stock, req.wavelengthNm);
	const { candidates, partUnits, parts, excluded } = candidateFilter(snap, req);
	const tSearch = performance.now();
	const deadline = Date.now() + req.timeBudgetMs;
	// Progress: the screening pass fills the first 40 % of the bar, the bounding passes the rest.
	let shown = 0;
	const stage = (name: SolveProgress['stage'], from: number, to: number): SolveOptions => {
		const tell = options.onProgress;
		if (!tell) return options;
		return { ...options, onProgress: (p) => tell({ ...p, stage: name, fraction: (shown = Math.max(shown, from + (to - from) * p.fraction)) }) };
	};
	const search = (boundRange: BoundRange | null) =>
		searchShards(
			key,
			snap,
			candidates,
			partUnits,
			req,
			boundRange ? stage('proving', SCREEN_SHARE, 1) : stage('screening', 0, options.keepAll ? 1 : SCREEN_SHARE),
			deadline,
			boundRange
		);
	// The screening pass: the candidates the paraxial screen likes best, traced; they set the N-th answer's key.
	const screened = await search(null);
	const shards = screened.shards;
	const limit = options.keepAll ? Infinity : req.limit;
	const bb = new BranchAndBound(snap, req, limit, deadline);
	bb.traceAll(mergeShards(shards).slice(0, options.keepAll ? undefined : TRACE_COUNT));
	const sum = (f: (s: ShardResult) => number) => shards.reduce((a, s) => a + f(s), 0);
	const answer = (solutions: Solution[], tail: Pick<SolveStats, 'physicalRoots' | 'truncated' | 'provenBest' | 'provingMs' | 'provisional'>): SolveResponse => ({
		request: req,
		solutions,
		noAnswer: solutions.length === 0 ? imagingNoAnswer(snap, candidates, partUnits, req) : null,
		stats: {
			partsConsidered: parts,
			elementsConsidered: candidates.length,
			configurationsEvaluated: sum((s) => s.configurationsEvaluated),
			rootsFound: sum((s) => s.rootsFound),
			traced: bb.traced,
			elapsedMs: Math.round((performance.now() - t0) * 10) / 10,
			searchMs: Math.round((performance.now() - tSearch) * 10) / 10,
			workers: screened.workers,
			partsExcluded: excluded,
			...tail
		}
	});
	// The bounding passes prove them (or find what beats them): every root whose rank bound does not exceed that key.
	// A listener gets the screening pass's answers first when the proof takes a while.
	const tProof = performance.now();
	const tell = options.onProvisional;
	const early =
		tell && !options.keepAll
			? setTimeout(() => {
					if (!options.signal?.aborted) tell(answer(bb.result(), { physicalRoots: sum((s) => s.physicalRoots), truncated: false, provenBest: false, provisional: true }));
				}, PROVISIONAL_AFTER_MS)
			: null;
	let proof: Awaited<ReturnType<typeof prove>>;
	try {
		proof = options.keepAll ? { proven: true, truncated: false, physicalRoots: null } : await prove(bb, search, deadline, options.signal);
	} finally {
		if (early) clearTimeout(early);
	}
	const provingMs = performance.now() - tProof;
	if (options.signal?.aborted) throw new DomainError(499, 'cancelled', 'The request was cancelled.');
	const truncated = shards.some((s) => s.truncated) || proof.truncated;
	return answer(bb.result(), {
		physicalRoots: proof.physicalRoots ?? sum((s) => s.physicalRoots),
		truncated,
		provenBest: !truncated && proof.proven,
		provingMs: Math.round(provingMs * 10) / 10
	});
}

/** The search within the question's time budget: one shard on this thread (inline), else a shard per worker of the pool. */
async function searchShards(
	key: string,
	snap: ElementSnapshot,
	candidates: Int32Array,
	partUnits: Int32Array,
	req: ParsedImagingRequest,
	options: SolveOptions,
	deadline: number,
	boundRange: BoundRange | null
): Promise<{ shards: KeptShard[]; workers: number }> {
	const params = searchParamsOf(req);
	const arrays = snapshotArrays(snap);
	const topK = options.keepAll ? Infinity : boundRange ? BOUND_PASS_K : TOP_K_PER_SHARD;
	if (options.inline) {
		const input = { ...arrays, partUnits, candidates, params, shardIndex: 0, shardCount: 1, topK, boundRange, deadline };
		return { shards: [{ ...searchShard(input), kept: topK }], workers: 0 };
	}
	const workers = workerCount();
	const watch = watchProgress(options, workers, ({ i, j }) => ({ parts: (j < 0 ? [i] : [i, j]).map((e) => snap.parts[snap.partIndex[e]].sku) }));
	try {
		const shards = await searchOnPool(
			{ key, ...arrays },
			{ candidates, partUnits, params, topK, boundRange, deadline, signal: options.signal, progress: watch.buffer }
		);
		return { shards: shards.map((sh) => ({ ...sh, kept: topK })), workers };
	} finally {
		watch.stop();
	}
}

/**
 * The bounding passes: roots with a rank bound up to the N-th answer's key, traced best bound
 * first; when a shard filled its buffer, another pass fetches the bounds above its last kept one.
 * `proven`: every root that could rank among the first N was traced.
 */
async function prove(
	bb: BranchAndBound,
	search: (range: BoundRange | null) => Promise<{ shards: KeptShard[] }>,
	deadline: number,
	signal: AbortSignal | undefined
): Promise<{ proven: boolean; truncated: boolean; physicalRoots: number | null }> {
	let range: BoundRange | null = { min: -Infinity, max: bb.bar };
	let physicalRoots: number | null = null;
	while (range !== null) {
		if (Date.now() > deadline || signal?.aborted) return { proven: false, truncated: true, physicalRoots };
		const { shards } = await search(range);
		physicalRoots ??= shards.reduce((a, sh) => a + sh.physicalRoots, 0);
		bb.trace(mergeShards(shards));
		if (shards.some((sh) => sh.truncated) || bb.cutShort) return { proven: false, truncated: true, physicalRoots };
		const next = bb.openWindow(shards);
		// Ties at the last kept bound would repeat the same pass: stop (not proven).
		if (next !== null && !(next.min > range.min)) return { proven: false, truncated: false, physicalRoots };
		range = next;
	}
	return { proven: true, truncated: false, physicalRoots };
}

/** A window of rank bounds (packed keys, both ends included) a second pass keeps. */
type BoundRange = { min: number; max: number };
/** A shard's result with how many records it could keep (its K). */
type KeptShard = ShardResult & { kept: number };

/** Merge: every shard's records, best rank bound first. */
function mergeShards(shards: ShardResult[]): Float64Array[] {
	const all: Float64Array[] = [];
	for (const sh of shards) for (let k = 0; k < sh.count; k++) all.push(sh.records.subarray(k * REC_STRIDE, (k + 1) * REC_STRIDE));
	return all.sort((a, b) => a[REC_SCORE] - b[REC_SCORE]);
}

/** One traced answer: its figures, ranking key (and packed), and how to evaluate it again in full. */
interface TracedAnswer {
	s: Omit<Solution, 'rank'>;
	key: number[];
	packed: number;
	/** The root's identity (elements, placement): ties are ordered by it, and a root is traced once. */
	id: string;
	again: () => Omit<Solution, 'rank'>;
}

/**
 * The exact top-N by branch and bound: roots are traced best rank bound first (each record's
 * REC_SCORE is a lower bound of its answer's key, rank-bound.ts) until the next bound is above the
 * N-th answer's key. A root whose bound is above it cannot rank among the first N; nor can any root
 * a shard dropped, once the shard's last kept bound is above it (`openWindow` says when a second
 * pass must fetch the rest). Figures of the ranking only (and the colour band when it ranks); the
 * first N are evaluated again in full (the same figures, so the same order).
 */
class BranchAndBound {
	readonly answers: TracedAnswer[] = [];
	/** Packed keys of the best `limit` answers so far, ascending. */
	private best: number[] = [];
	private seen = new Set<string>();
	traced = 0;
	/** The tracing stopped at the time budget with roots left that could still rank. */
	cutShort = false;

	constructor(
		private readonly snap: ElementSnapshot,
		private readonly req: ParsedImagingRequest,
		private readonly limit: number,
		private readonly deadline: number
	) {}

	/** The N-th answer's packed key (Infinity while there are fewer than N). */
	get bar(): number {
		return this.best.length >= this.limit ? this.best[this.limit - 1] : Infinity;
	}

	/** Traces every one of `records` (the screening pass's best). */
	traceAll(records: Float64Array[]): void {
		this.trace(records, false);
	}

	/** Traces `records` (best bound first) until the next bound cannot beat the N-th answer. */
	trace(records: Float64Array[], bounded = true): void {
		for (const rec of records) {
			if (bounded && rec[REC_SCORE] > this.bar) return;
			const id = `${rec[REC_I]},${rec[REC_J]},${rec[REC_S]},${rec[REC_G]},${rec[REC_TRACK]}`;
			if (this.seen.has(id)) continue;
			if (this.answers.length >= this.limit && Date.now() > this.deadline) {
				this.cutShort = true;
				return;
			}
			this.seen.add(id);
			this.traced++;
			const a = this.evaluate(rec, id);
			if (a) this.add(a);
		}
	}

	private add(a: TracedAnswer): void {
		this.answers.push(a);
		if (!Number.isFinite(this.limit)) return;
		const b = this.best;
		let k = b.length;
		while (k > 0 && b[k - 1] > a.packed) k--;
		if (k < this.limit) {
			b.splice(k, 0, a.packed);
			if (b.length > this.limit) b.pop();
		}
	}

	private evaluate(rec: Float64Array, id: string): TracedAnswer | null {
		const { snap, req } = this;
		const { choice, symmetric, trackMm } = placementOf(rec, snap, req);
		const asked = trackMm === req.trackMm ? req : { ...req, trackMm };
		const ev = evaluatePlacement(choice, asked, symmetric, { colour: req.rankBy === 'band', details: false });
		if (!ev.verified) return null;
		// The answer with the track it uses and its coating warnings.
		const finish = (sol: Omit<Solution, 'rank'>) => ({ ...withCoatingWarnings(sol, choice.parts, req.wavelengthNm), trackOffsetMm: trackMm - req.trackMm });
		const s = finish(ev.solution);
		const key = rankKey(s, req.rankBy);
		return { s, key, packed: packRankKey(key), id, again: () => finish(evaluatePlacement(choice, asked, symmetric).solution) };
	}

	/**
	 * The window of bounds a second pass must fetch, or null when none: from the lowest last-kept
	 * bound of a shard that was full (it may have dropped roots bounded by that or more) up to the
	 * N-th answer's key, when that lowest bound does not exceed it.
	 */
	openWindow(shards: readonly KeptShard[]): BoundRange | null {
		let min = Infinity;
		for (const sh of shards) {
			if (sh.count < sh.kept || sh.count === 0) continue;
			min = Math.min(min, sh.records[(sh.count - 1) * REC_STRIDE + REC_SCORE]);
		}
		const max = this.bar;
		return Number.isFinite(min) && min <= max ? { min, max } : null;
	}

	/** The first N answers by the ranking key (ties by the root's identity), evaluated again in full. */
	result(): Solution[] {
		const sorted = [...this.answers].sort((a, b) => compareKeys(a.key, b.key) || (a.id < b.id ? -1 : a.id > b.id ? 1 : 0));
		return sorted.slice(0, this.limit).map((a, n) => ({ rank: n + 1, ...a.again() }));
	}
}

/** A search record as the evaluation reads it: the parts and elements in order, the placement, the track it uses. */
function placementOf(rec: Float64Array, snap: ElementSnapshot, req: ParsedImagingRequest): { choice: PlacementChoice; symmetric: boolean[]; trackMm: number } {
	const i = rec[REC_I],
		j = rec[REC_J];
	const idx = j < 0 ? [i] : [i, j];
	const flags = rec[REC_FLAGS];
	const choice: PlacementChoice = {
		parts: idx.map((e) => snap.parts[snap.partIndex[e]]),
		elements: idx.map((e) => snap.elements[e]),
		objectDistanceMm: rec[REC_S],
		gapsMm: j < 0 ? [] : [rec[REC_G]],
		backDistanceMm: rec[REC_D],
		targetMagnification: req.magnification,
		afocalFamily: (flags & ROOT_FAMILY) !== 0,
		doubleRoot: (flags & ROOT_DOUBLE) !== 0,
		screenEstimateMm: rec[REC_SA_MM]
	};
	return { choice, symmetric: idx.map((e) => snap.symmetricPart[snap.partIndex[e]]), trackMm: rec[REC_TRACK] };
}
