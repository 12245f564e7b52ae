/**
 * The beam modes orchestrated, as `solve.ts` does for imaging: element snapshot at the laser's
 * wavelength (the same cache), candidate filter, the shard search on the worker pool (or inline),
 * merge, per-answer figures, ranking, and, when nothing qualifies, the reason and the nearest miss.
 * Database-free: `service.ts` loads the stock.
 */
import { DomainError } from '../errors';
import type { ParsedAfocalRequest, ParsedBeamRequest } from '../../solver/request';
import type { AfocalSolution, AfocalSolveResponse, BeamSolution, BeamSolveResponse, SolveStats } from '../../solver/types';
import { wavelengthCoveredByAnyMaterial } from './elements';
import { snapshotArrays, type SnapshotArrays } from '../../solver/search/search-kernel';
import { snapshotFor, candidateFilter, watchProgress, withCoatingWarnings, type StockView, type SolveOptions } from './solve';
import { outsideCoating } from './exclusions';
import { coatingClass } from '../../solver/ranking';
import { searchModeOnPool, workerCount } from './pool';
import { runModeShard, type ModeShardResult, type ModeShardTask } from './mode-shard';
import {
	BREC_STRIDE,
	BREC_I,
	BREC_J,
	BREC_P1,
	BREC_GAP,
	BREC_EFFICIENCY,
	compareBeamRecords,
	type BeamSearchParams
} from './beam-kernel';
import { AREC_STRIDE, AREC_I, AREC_J, AREC_GAP, type AfocalSearchParams } from './afocal-kernel';
import { beamNumbers, evaluateBeam, evaluateAfocal } from './beam-evaluate';

function checkWavelength(stock: StockView, wavelengthNm: number): void {
	if (!wavelengthCoveredByAnyMaterial(stock.parts, wavelengthNm)) {
		throw new DomainError(400, 'invalid-input', 'Some fields are not valid.', {
			wavelengthNm: `No material of the catalogue has a known refractive index at ${wavelengthNm} nm.`
		});
	}
}

async function runShards(
	key: string,
	snap: SnapshotArrays & { parts: { sku: string }[] },
	task: Omit<ModeShardTask, 'shardIndex' | 'shardCount'>,
	options: SolveOptions
): Promise<{ shards: ModeShardResult[]; workers: number }> {
	if (options.inline) {
		const shardCount = options.inlineShards ?? 1;
		// The pool's shared buffer (cancel flag, best K-th key), so that later shards prune by earlier ones' keys.
		const cancel = shardCount > 1 ? new SharedArrayBuffer(16) : null;
		const shards = Array.from({ length: shardCount }, (_, shardIndex) => runModeShard(snap, { ...task, shardIndex, shardCount, cancel } as ModeShardTask));
		return { shards, workers: 0 };
	}
	const workers = workerCount();
	const sku = (e: number) => snap.parts[snap.partIndex[e]].sku;
	const watch = watchProgress(options, workers, ({ i, j, score }) => ({
		parts: (j < 0 ? [i] : [i, j]).map(sku),
		// progressScore (beam-kernel.ts): efficiency key · 3e6 + …; the afocal kernel does not report a best.
		...(task.mode === 'beam' ? { efficiency: (1e6 - Math.floor(score / 3e6)) / 1e6 } : {})
	}));
	try {
		const shards = await searchModeOnPool(
			{ key, ...snapshotArrays(snap) },
			{ ...task, signal: options.signal, progress: watch.buffer } as Parameters<typeof searchModeOnPool>[1]
		);
		return { shards, workers };
	} finally {
		watch.stop();
	}
}

function stats(shards: ModeShardResult[], parts: number, elements: number, traced: number, t0: number, searchMs: number, workers: number, excluded: SolveStats['partsExcluded']): SolveStats {
	const sum = (f: (s: ModeShardResult) => number) => shards.reduce((a, s) => a + f(s), 0);
	return {
		partsConsidered: parts,
		elementsConsidered: elements,
		configurationsEvaluated: sum((s) => s.configurationsEvaluated),
		rootsFound: sum((s) => s.rootsFound),
		physicalRoots: sum((s) => s.physicalRoots),
		traced,
		elapsedMs: Math.round((performance.now() - t0) * 10) / 10,
		searchMs: Math.round(searchMs * 10) / 10,
		truncated: shards.some((s) => s.truncated),
		workers,
		partsExcluded: excluded
	};
}

const pct = (x: number) => `${(100 * x).toFixed(x >= 0.995 ? 1 : 0)} %`;

/**
 * Mode beam against `stock` (see the module comment). Answers that use a part outside its coating
 * band rank after every in-band answer: when the stock holds such parts (and the question does not
 * leave them out), the in-band parts are searched first; only when they give fewer answers than the
 * limit is the whole stock searched, and its answers with an out-of-band part follow.
 */
export async function solveBeamWithStock(stock: StockView, req: ParsedBeamRequest, options: SolveOptions = {}): Promise<BeamSolveResponse> {
	const t0 = performance.now();
	checkWavelength(stock, req.wavelengthNm);
	const { key, snapshot: snap } = snapshotFor(stock, req.wavelengthNm);
	const all = candidateFilter(snap, req);
	const b = beamNumbers(req);
	const params: BeamSearchParams = {
		inWaistZMm: b.inWaistZMm,
		inRayleighMm: b.inRayleighMm,
		inWaistRadiusMm: b.inWaistRadiusMm,
		targetZMm: b.targetZMm,
		targetRayleighMm: b.targetRayleighMm,
		targetWaistRadiusMm: b.targetWaistRadiusMm,
		m2LambdaMm: b.m2 * b.lambdaNm * 1e-6,
		minGapMm: req.minGapMm,
		minWorkingDistanceMm: req.minWorkingDistanceMm,
		minClearance: req.minClearance,
		maxElements: req.maxElements
	};
	// Each shard keeps its exact best `limit`: the merge of the shards' best is then the exact top `limit`.
	const topK = options.keepAll ? Infinity : req.limit;
	const deadline = Date.now() + req.timeBudgetMs;
	let searchMs = 0;
	const searched: ModeShardResult[] = [];
	const pass = async (filter: { candidates: Int32Array; partUnits: Int32Array }) => {
		const tSearch = performance.now();
		const { shards, workers } = await runShards(key, snap, { mode: 'beam', params, candidates: filter.candidates, partUnits: filter.partUnits, topK, deadline }, options);
		searchMs += performance.now() - tSearch;
		searched.push(...shards);
		if (options.signal?.aborted) throw new DomainError(499, 'cancelled', 'The request was cancelled.');
		// Merge the shards' records in exact rank order.
		let total = 0;
		for (const s of shards) total += s.count;
		const recs = new Float64Array(Math.max(1, total) * BREC_STRIDE);
		let at = 0;
		for (const s of shards) {
			recs.set(s.records.subarray(0, s.count * BREC_STRIDE), at * BREC_STRIDE);
			at += s.count;
		}
		const order = Array.from({ length: total }, (_, k) => k).sort((x, y) => compareBeamRecords(recs, x, y, req.minClearance));
		const partsOf = (k: number) => {
			const o = k * BREC_STRIDE;
			const i = recs[o + BREC_I],
				j = recs[o + BREC_J];
			return j < 0 ? [i] : [i, j];
		};
		const evaluate = (k: number): Omit<BeamSolution, 'rank'> => {
			const o = k * BREC_STRIDE;
			const idx = partsOf(k);
			const ps = idx.map((e) => snap.parts[snap.partIndex[e]]);
			const ev = evaluateBeam(req, ps, idx.map((e) => snap.elements[e]), recs[o + BREC_P1], idx.length < 2 ? [] : [recs[o + BREC_GAP]], idx.map((e) => snap.symmetricPart[snap.partIndex[e]]));
			return withCoatingWarnings(ev, ps, req.wavelengthNm);
		};
		const outOfBand = (k: number) => partsOf(k).some((e) => outsideCoating(snap.parts[snap.partIndex[e]], req.wavelengthNm));
		const qualifying = order.filter((k) => recs[k * BREC_STRIDE + BREC_EFFICIENCY] >= req.minEfficiency);
		return { shards, workers, total, order, qualifying, evaluate, outOfBand };
	};
	const limit = options.keepAll ? Infinity : req.limit;
	const someOutOfBand = !req.inCoatingBandOnly && snap.parts.some((p) => outsideCoating(p, req.wavelengthNm));
	let picked: Omit<BeamSolution, 'rank'>[] = [];
	let last: Awaited<ReturnType<typeof pass>>;
	if (someOutOfBand) {
		const inBand = await pass(candidateFilter(snap, req, (p) => !outsideCoating(p, req.wavelengthNm)));
		picked = inBand.qualifying.slice(0, limit).map(inBand.evaluate);
		last = inBand;
		if (picked.length < limit) {
			const whole = await pass(all);
			picked.push(...whole.qualifying.filter(whole.outOfBand).slice(0, limit - picked.length).map(whole.evaluate));
			// The nearest miss comes from the whole stock.
			last = whole;
		}
	} else {
		last = await pass(all);
		picked = last.qualifying.slice(0, limit).map(last.evaluate);
	}
	const solutions: BeamSolution[] = picked.map((s, n) => ({ rank: n + 1, ...s }));
	let noAnswer: BeamSolveResponse['noAnswer'] = null;
	if (!solutions.length) {
		const near = last.order.length ? { rank: 1, ...last.evaluate(last.order[0]) } : null;
		noAnswer = beamNoAnswer(req, near, all.parts);
	}
	return {
		request: req,
		solutions,
		noAnswer,
		stats: stats(searched, all.parts, all.candidates.length, solutions.length, t0, searchMs, last.workers, all.excluded)
	};
}

/** Why a mode-beam question has no answer, and what would help (from the nearest miss). */
function beamNoAnswer(req: ParsedBeamRequest, near: BeamSolution | null, parts: number): NonNullable<BeamSolveResponse['noAnswer']> {
	if (parts === 0) {
		return { reason: 'No part of the stock matches the filter (available units, kit, drawer).', hint: 'Widen the filter, or include parts to buy.', nearMiss: null };
	}
	if (!near) {
		return {
			reason: `No part or pair can be placed between z = 0 and ${req.minWorkingDistanceMm} mm before the target waist with a clear aperture ${req.minClearance}× the beam.`,
			hint: 'Move the target waist further away, lower the clearance factor, or allow parts to buy.',
			nearMiss: null
		};
	}
	const f = near.beam;
	const want = f.targetWaistDiameterMm;
	let hint: string;
	if (f.outputWaistDiameterMm > want * 1.05) hint = `its waist is ${(f.outputWaistDiameterMm / want).toFixed(2)}× too large: a shorter focal length, or a wider beam on the part, would help.`;
	else if (f.outputWaistDiameterMm < want / 1.05) hint = `its waist is ${(want / f.outputWaistDiameterMm).toFixed(2)}× too small: a longer focal length would help.`;
	else hint = `its waist lies ${Math.abs(f.waistOffsetMm).toFixed(1)} mm ${f.waistOffsetMm < 0 ? 'before' : 'after'} the target: moving the target waist, or a second part, would help.`;
	return {
		reason: `No answer reaches the ${pct(req.minEfficiency)} efficiency asked for: the nearest (${near.elements.map((e) => e.sku).join(' + ')}) reaches ${pct(f.efficiency)}.`,
		hint: `The nearest answer reaches ${pct(f.efficiency)} efficiency; ${hint}`,
		nearMiss: near
	};
}

/** Mode afocal against `stock` (see the module comment). */
export async function solveAfocalWithStock(stock: StockView, req: ParsedAfocalRequest, options: SolveOptions = {}): Promise<AfocalSolveResponse> {
	const t0 = performance.now();
	checkWavelength(stock, req.wavelengthNm);
	const { key, snapshot: snap } = snapshotFor(stock, req.wavelengthNm);
	const { candidates, partUnits, parts, excluded } = candidateFilter(snap, req);
	const params: AfocalSearchParams = {
		expansion: req.expansion,
		expansionTolerance: req.expansionTolerance,
		inputBeamDiameterMm: req.inputBeamDiameterMm,
		maxLengthMm: req.maxLengthMm,
		intermediateFocus: req.intermediateFocus === undefined ? -1 : req.intermediateFocus ? 1 : 0,
		minGapMm: req.minGapMm,
		minClearance: req.minClearance
	};
	const tSearch = performance.now();
	const deadline = Date.now() + req.timeBudgetMs;
	const { shards, workers } = await runShards(key, snap, { mode: 'afocal', params, candidates, partUnits, topK: Infinity, deadline }, options);
	const searchMs = performance.now() - tSearch;
	if (options.signal?.aborted) throw new DomainError(499, 'cancelled', 'The request was cancelled.');
	const evaluated = evaluateAfocalRecords(snap, req, shards);
	evaluated.sort(compareAfocal);
	const limit = options.keepAll ? evaluated.length : req.limit;
	const solutions: AfocalSolution[] = evaluated.slice(0, limit).map((s, n) => ({ rank: n + 1, ...s }));
	let noAnswer: AfocalSolveResponse['noAnswer'] = null;
	if (!solutions.length) {
		// The nearest miss: the same search with the expansion tolerance, length and arrangement opened up.
		const wide: AfocalSearchParams = { ...params, expansionTolerance: 0.5, maxLengthMm: 20_000, intermediateFocus: -1 };
		const r = runModeShard(snap, { mode: 'afocal', params: wide, candidates, partUnits, topK: Infinity, deadline: Date.now() + 2000, shardIndex: 0, shardCount: 1 });
		const near = evaluateAfocalRecords(snap, req, [r]).sort((x, y) => {
			const ex = Math.abs(x.afocal.expansion / req.expansion - 1),
				ey = Math.abs(y.afocal.expansion / req.expansion - 1);
			const bx = ex <= req.expansionTolerance ? 0 : ex,
				by = ey <= req.expansionTolerance ? 0 : ey;
			return bx - by || x.afocal.lengthMm - y.afocal.lengthMm;
		})[0];
		noAnswer = afocalNoAnswer(req, near ? { rank: 1, ...near } : null, parts);
	}
	return { request: req, solutions, noAnswer, stats: stats(shards, parts, candidates.length, evaluated.length, t0, searchMs, workers, excluded) };
}

function evaluateAfocalRecords(snap: ReturnType<typeof snapshotFor>['snapshot'], req: ParsedAfocalRequest, shards: ModeShardResult[]): Omit<AfocalSolution, 'rank'>[] {
	const out: Omit<AfocalSolution, 'rank'>[] = [];
	for (const s of shards) {
		for (let k = 0; k < s.count; k++) {
			const o = k * AREC_STRIDE;
			const idx = [s.records[o + AREC_I], s.records[o + AREC_J]];
			const ev = evaluateAfocal(
				req,
				idx.map((e) => snap.parts[snap.partIndex[e]]),
				idx.map((e) => snap.elements[e]),
				s.records[o + AREC_GAP],
				idx.map((e) => snap.symmetricPart[snap.partIndex[e]])
			);
			if (!ev.clipped) out.push(withCoatingWarnings(ev.solution, idx.map((e) => snap.parts[snap.partIndex[e]]), req.wavelengthNm));
		}
	}
	return out;
}

/**
 * Afocal rank: in-band answers before those using a part outside its coating band; then traced answers
 * first by residual divergence (to 1e-4 mrad), then length; untraced (black-box) ones after, by length.
 */
export function compareAfocal(x: Omit<AfocalSolution, 'rank'>, y: Omit<AfocalSolution, 'rank'>): number {
	const coat = coatingClass(x) - coatingClass(y);
	if (coat !== 0) return coat;
	const rx = x.afocal.residualDivergenceMrad,
		ry = y.afocal.residualDivergenceMrad;
	if ((rx === null) !== (ry === null)) return rx === null ? 1 : -1;
	if (rx !== null && ry !== null) {
		const d = Math.round(rx * 1e4) - Math.round(ry * 1e4);
		if (d !== 0) return d;
	}
	return x.afocal.lengthMm - y.afocal.lengthMm || x.elements[0].partId - y.elements[0].partId || x.elements[1].partId - y.elements[1].partId;
}

function afocalNoAnswer(req: ParsedAfocalRequest, near: AfocalSolution | null, parts: number): NonNullable<AfocalSolveResponse['noAnswer']> {
	if (parts === 0) return { reason: 'No part of the stock matches the filter (available units, kit, drawer).', hint: 'Widen the filter, or include parts to buy.', nearMiss: null };
	if (!near) {
		return {
			reason: `No two parts of the stock make an afocal pair within ±50 % of ${req.expansion}× that passes a ${req.inputBeamDiameterMm} mm beam with ${req.minClearance}× clearance.`,
			hint: 'Allow parts to buy, a smaller input beam or a lower clearance factor.',
			nearMiss: null
		};
	}
	const f = near.afocal;
	const off = f.expansion / req.expansion - 1;
	const parts2 = near.elements.map((e) => e.sku).join(' + ');
	let hint: string;
	if (Math.abs(off) > req.expansionTolerance) hint = `the nearest expansion from stock is ${f.expansion.toFixed(3)}× (${(100 * off).toFixed(1)} % off, ${parts2}): a wider tolerance would accept it.`;
	else if (f.lengthMm > req.maxLengthMm) hint = `the shortest pair (${parts2}) is ${f.lengthMm.toFixed(1)} mm long: allow at least that length.`;
	else hint = `the nearest pair (${parts2}) ${f.intermediateFocusMm !== null ? 'has' : 'has no'} focus between the parts: allow ${f.intermediateFocusMm !== null ? 'an intermediate focus' : 'answers without one'}.`;
	return { reason: `No pair meets the expansion ${req.expansion}× ±${(100 * req.expansionTolerance).toFixed(1)} %, ${req.maxLengthMm} mm and the arrangement asked for.`, hint: `Nearest: ${hint}`, nearMiss: near };
}

