/**
 * Build from stock, orchestrated: element snapshot (cached per stock key and wavelength),
 * candidate filter (available, kit, drawer), the search on the worker pool (or inline),
 * merge of the shards' best candidates, exact real-ray evaluation of the best few, ranking.
 * Database-free: `service.ts` loads the stock and calls `solveWithStock`.
 */
import { DomainError } from '../errors';
import { ROOT_DOUBLE, ROOT_FAMILY } from '../../optics/imaging';
import type { ParsedImagingRequest } from '../../solver/request';
import type { Solution, SolveResponse } from '../../solver/types';
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
	type SearchParams
} from './search-kernel';
import { searchOnPool, workerCount } from './pool';
import { evaluatePlacement, rankKey, compareKeys } from './evaluate';

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
}

/** Which elements of the snapshot the question allows, and how many units each part may use. */
export function candidateFilter(snap: ElementSnapshot, req: Pick<ParsedImagingRequest, 'partIds' | 'locationIds' | 'availableOnly'>): { candidates: Int32Array; partUnits: Int32Array; parts: number } {
	const ids = req.partIds ? new Set(req.partIds) : null;
	const locs = req.locationIds ? new Set(req.locationIds) : null;
	const allowed = snap.parts.map((p) => {
		if (ids && !ids.has(p.partId)) return false;
		if (locs && !p.locations.some((l) => locs.has(l.locationId) && l.quantity > 0)) return false;
		return !req.availableOnly || p.available > 0;
	});
	const partUnits = Int32Array.from(snap.parts.map((p) => (req.availableOnly ? p.available : Math.max(2, p.available))));
	const list: number[] = [];
	for (let e = 0; e < snap.elements.length; e++) if (allowed[snap.partIndex[e]]) list.push(e);
	return { candidates: Int32Array.from(list), partUnits, parts: allowed.filter(Boolean).length };
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
	const { candidates, partUnits, parts } = candidateFilter(snap, req);
	const params: SearchParams = {
		trackMm: req.trackMm,
		magnification: req.magnification,
		magnificationTolerance: req.magnificationTolerance,
		objectNA: req.objectNA,
		objectHeightMm: req.objectHeightMm,
		minGapMm: req.minGapMm,
		minWorkingDistanceMm: req.minWorkingDistanceMm,
		maxElements: req.maxElements,
		wavelengthNm: req.wavelengthNm
	};
	const deadline = Date.now() + req.timeBudgetMs;
	const tSearch = performance.now();
	let shards: { records: Float64Array; count: number; configurationsEvaluated: number; rootsFound: number; physicalRoots: number; truncated: boolean }[];
	let workers = 0;
	if (options.inline) {
		shards = [
			searchShard({
				packed: snap.packed,
				seidel: snap.seidel,
				partIndex: snap.partIndex,
				untraceable: snap.untraceable,
				partUnits,
				candidates,
				params,
				shardIndex: 0,
				shardCount: 1,
				topK: options.keepAll ? Infinity : TOP_K_PER_SHARD,
				deadline
			})
		];
	} else {
		workers = workerCount();
		shards = await searchOnPool(
			{ key, packed: snap.packed, seidel: snap.seidel, partIndex: snap.partIndex, untraceable: snap.untraceable },
			{ candidates, partUnits, params, topK: TOP_K_PER_SHARD, deadline, signal: options.signal }
		);
	}
	const searchMs = performance.now() - tSearch;
	if (options.signal?.aborted) throw new DomainError(499, 'cancelled', 'The request was cancelled.');

	// Merge: every shard's records, best screen score first.
	const all: { rec: Float64Array; score: number }[] = [];
	for (const sh of shards) {
		for (let k = 0; k < sh.count; k++) {
			const rec = sh.records.subarray(k * REC_STRIDE, (k + 1) * REC_STRIDE);
			all.push({ rec, score: rec[REC_SCORE] });
		}
	}
	all.sort((a, b) => a.score - b.score);
	const toTrace = options.keepAll ? all : all.slice(0, TRACE_COUNT);

	const evaluated: Omit<Solution, 'rank'>[] = [];
	for (const { rec } of toTrace) {
		const i = rec[REC_I],
			j = rec[REC_J];
		const idx = j < 0 ? [i] : [i, j];
		const flags = rec[REC_FLAGS];
		const ev = evaluatePlacement(
			{
				parts: idx.map((e) => snap.parts[snap.partIndex[e]]),
				elements: idx.map((e) => snap.elements[e]),
				objectDistanceMm: rec[REC_S],
				gapsMm: j < 0 ? [] : [rec[REC_G]],
				backDistanceMm: rec[REC_D],
				targetMagnification: req.magnification,
				afocalFamily: (flags & ROOT_FAMILY) !== 0,
				doubleRoot: (flags & ROOT_DOUBLE) !== 0,
				screenEstimateMm: rec[REC_SA_MM]
			},
			req,
			idx.map((e) => snap.symmetricPart[snap.partIndex[e]])
		);
		if (ev.verified) evaluated.push(ev.solution);
	}
	const keyed = evaluated.map((s) => ({ s, k: rankKey(s) }));
	keyed.sort((a, b) => compareKeys(a.k, b.k));
	const limit = options.keepAll ? keyed.length : req.limit;
	const solutions: Solution[] = keyed.slice(0, limit).map(({ s }, n) => ({ rank: n + 1, ...s }));

	const sum = (f: (s: (typeof shards)[number]) => number) => shards.reduce((a, s) => a + f(s), 0);
	return {
		request: req,
		solutions,
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
			partsSkipped: snap.skipped
		}
	};
}
