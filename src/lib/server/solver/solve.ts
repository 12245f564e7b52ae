/**
 * Build from stock, orchestrated: element snapshot (cached per stock key and wavelength),
 * candidate filter (available, kit, drawer), the search on the worker pool (or inline),
 * merge of the shards' best candidates, exact real-ray evaluation of the best few, ranking.
 * Database-free: `service.ts` loads the stock and calls `solveWithStock`.
 */
import { DomainError } from '../errors';
import { ROOT_DOUBLE, ROOT_FAMILY } from '../../optics/imaging';
import type { ParsedImagingRequest } from '../../solver/request';
import type { PartsExcluded, Solution, SolveProgress, SolveResponse } from '../../solver/types';
import { progressBuffer, readProgress } from './progress';
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
	type ShardResult
} from './search-kernel';
import { searchOnPool, workerCount } from './pool';
import { evaluatePlacement, rankKey, compareKeys, type PlacementChoice } from './evaluate';
import { coatingExclusionReason, coatingWarnings, groupExcluded, outsideCoating } from './exclusions';

/** The answer with its coating warnings (parts in the order light meets them); none → no `warnings` key change. */
export function withCoatingWarnings<S extends { warnings?: Solution['warnings'] }>(s: S, parts: readonly CandidatePart[], wavelengthNm: number): S {
	const w = coatingWarnings(parts, wavelengthNm);
	return { ...s, warnings: [...(s.warnings ?? []).filter((x) => x.code !== 'coating-out-of-band'), ...w] };
}

/** Candidates each shard keeps for the final stage. */
export const TOP_K_PER_SHARD = 400;
/** Candidates traced with real rays after the merge. */
export const TRACE_COUNT = 480;

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
	const { shards, workers } = await searchShards(key, snap, candidates, partUnits, req, options);
	const searchMs = performance.now() - tSearch;
	if (options.signal?.aborted) throw new DomainError(499, 'cancelled', 'The request was cancelled.');

	const toTrace = mergeShards(shards, options.keepAll ? Infinity : TRACE_COUNT);
	const solutions = rankTraced(toTrace, snap, req, options.keepAll ? Infinity : req.limit);

	const sum = (f: (s: ShardResult) => number) => shards.reduce((a, s) => a + f(s), 0);
	return {
		request: req,
		solutions,
		noAnswer: solutions.length === 0 ? imagingNoAnswer(snap, candidates, partUnits, req) : null,
		stats: {
			partsConsidered: parts,
			elementsConsidered: candidates.length,
			configurationsEvaluated: sum((s) => s.configurationsEvaluated),
			rootsFound: sum((s) => s.rootsFound),
			physicalRoots: sum((s) => s.physicalRoots),
			traced: toTrace.length,
			elapsedMs: Math.round((performance.now() - t0) * 10) / 10,
			searchMs: Math.round(searchMs * 10) / 10,
			truncated: shards.some((s) => s.truncated),
			workers,
			partsExcluded: excluded
		}
	};
}


/** The search within the question's time budget: one shard on this thread (inline), else a shard per worker of the pool. */
async function searchShards(
	key: string,
	snap: ElementSnapshot,
	candidates: Int32Array,
	partUnits: Int32Array,
	req: ParsedImagingRequest,
	options: SolveOptions
): Promise<{ shards: ShardResult[]; workers: number }> {
	const params = searchParamsOf(req);
	const deadline = Date.now() + req.timeBudgetMs;
	const { packed, seidel, partIndex, untraceable } = snap;
	if (options.inline) {
		const topK = options.keepAll ? Infinity : TOP_K_PER_SHARD;
		return { shards: [searchShard({ packed, seidel, partIndex, untraceable, partUnits, candidates, params, shardIndex: 0, shardCount: 1, topK, deadline })], workers: 0 };
	}
	const workers = workerCount();
	const watch = watchProgress(options, workers, ({ i, j }) => ({ parts: (j < 0 ? [i] : [i, j]).map((e) => snap.parts[snap.partIndex[e]].sku) }));
	try {
		const shards = await searchOnPool(
			{ key, packed, seidel, partIndex, untraceable },
			{ candidates, partUnits, params, topK: TOP_K_PER_SHARD, deadline, signal: options.signal, progress: watch.buffer }
		);
		return { shards, workers };
	} finally {
		watch.stop();
	}
}

/** Merge: every shard's records, best screen score first, the first `count` of them. */
function mergeShards(shards: ShardResult[], count: number): Float64Array[] {
	const all: { rec: Float64Array; score: number }[] = [];
	for (const sh of shards) {
		for (let k = 0; k < sh.count; k++) {
			const rec = sh.records.subarray(k * REC_STRIDE, (k + 1) * REC_STRIDE);
			all.push({ rec, score: rec[REC_SCORE] });
		}
	}
	all.sort((a, b) => a.score - b.score);
	return (Number.isFinite(count) ? all.slice(0, count) : all).map((x) => x.rec);
}

/**
 * Every candidate with the figures that rank (the colour band only when it ranks), ranked; the first `limit`
 * answers are evaluated again in full (drawing rays, tolerance view, colour band): the same figures, so the same order.
 */
function rankTraced(toTrace: Float64Array[], snap: ElementSnapshot, req: ParsedImagingRequest, limit: number): Solution[] {
	const evaluated: { s: Omit<Solution, 'rank'>; again: () => Omit<Solution, 'rank'> }[] = [];
	const rankOnly = { colour: req.rankBy === 'band', details: false };
	for (const rec of toTrace) {
		const { choice, symmetric, trackMm } = placementOf(rec, snap, req);
		const asked = trackMm === req.trackMm ? req : { ...req, trackMm };
		const ev = evaluatePlacement(choice, asked, symmetric, rankOnly);
		// The answer with the track it uses and its coating warnings.
		const finish = (sol: Omit<Solution, 'rank'>) => ({ ...withCoatingWarnings(sol, choice.parts, req.wavelengthNm), trackOffsetMm: trackMm - req.trackMm });
		if (ev.verified) evaluated.push({ s: finish(ev.solution), again: () => finish(evaluatePlacement(choice, asked, symmetric).solution) });
	}
	const keyed = evaluated.map((e) => ({ e, k: rankKey(e.s, req.rankBy) }));
	keyed.sort((a, b) => compareKeys(a.k, b.k));
	return keyed.slice(0, limit).map(({ e }, n) => ({ rank: n + 1, ...e.again() }));
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
