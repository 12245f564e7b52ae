/**
 * A long search's progress through the worker pool: the fraction searched counts up to 1, the best candidate so
 * far names stock parts, and aborting the search mid-way ends it as cancelled. On the 3,000-part synthetic stock
 * (invented), so that the search runs long enough to report.
 */
import { describe, expect, it } from 'vitest';
import { syntheticStock } from '../../bench/_synthetic-stock';
import { solveWithStock, PROVISIONAL_AFTER_MS, type StockView } from '../../../src/lib/server/solver/solve';
import { compareKeys, rankKey } from '../../../src/lib/solver/ranking';
import { solveBeamWithStock } from '../../../src/lib/server/solver/beam-solve';
import { solveRequestSchema, type ParsedBeamRequest, type ParsedImagingRequest } from '../../../src/lib/solver/request';
import { progressBuffer, progressSlot, offerBest, readProgress, PG_FRACTION } from '../../../src/lib/solver/search/progress';
import type { SolveProgress, SolveResponse } from '../../../src/lib/solver/types';

const stock: StockView = { key: 'progress-3000', parts: syntheticStock(3000) };
const skus = new Set(stock.parts.map((p) => p.sku));

describe('search progress', () => {
	it('the buffer: mean fraction over the shards, best candidate of any shard (lower score)', () => {
		const sab = progressBuffer(2);
		const a = progressSlot(sab, 0)!,
			b = progressSlot(sab, 1)!;
		expect(readProgress(sab, 2)).toEqual({ fraction: 0, best: null });
		a[PG_FRACTION] = 0.5;
		b[PG_FRACTION] = 1;
		offerBest(a, 3, 4, 2.5);
		offerBest(b, 7, -1, 1.5);
		offerBest(b, 8, 9, 1.9); // worse than b's best: ignored
		expect(readProgress(sab, 2)).toEqual({ fraction: 0.75, best: { i: 7, j: -1, score: 1.5 } });
		expect(progressSlot(sab, 2)).toBeNull();
	});

	it('imaging: fractions count up to 1 and the best so far names stock parts', async () => {
		const seen: SolveProgress[] = [];
		const req = solveRequestSchema.parse({ trackMm: 600, magnification: -0.3, objectNA: 0.01, objectHeightMm: 0.5, wavelengthNm: 1064, limit: 5 }) as ParsedImagingRequest;
		let provisional: SolveResponse | null = null;
		const r = await solveWithStock(stock, req, { onProgress: (p) => seen.push(p), progressEveryMs: 20, onProvisional: (x) => (provisional = x) });
		expect(seen.length).toBeGreaterThan(0);
		for (let i = 1; i < seen.length; i++) expect(seen[i].fraction).toBeGreaterThanOrEqual(seen[i - 1].fraction);
		// The whole bar when every pass ran to its end; short of it when the time budget stopped the bounding pass.
		if (r.stats.truncated) {
			expect(seen.at(-1)!.fraction).toBeLessThan(1);
			expect(r.stats.provenBest).toBe(false);
		} else expect(seen.at(-1)!.fraction).toBe(1);
		const best = seen.at(-1)!.best;
		expect(best).not.toBeNull();
		for (const sku of best!.parts) expect(skus.has(sku)).toBe(true);
		expect(r.solutions.length).toBeGreaterThan(0);
		// Proving the answers best on 3,000 parts takes seconds: the screening pass's answers come first, marked
		// provisional, and the final ones rank each place at least as well.
		expect(seen.some((p) => p.stage === 'screening') && seen.some((p) => p.stage === 'proving')).toBe(true);
		expect(r.stats.provingMs!).toBeGreaterThan(PROVISIONAL_AFTER_MS);
		const early = provisional as SolveResponse | null;
		expect(early).not.toBeNull();
		expect(early!.stats.provisional).toBe(true);
		expect(early!.stats.provenBest).toBe(false);
		expect(r.stats.provisional).toBeUndefined();
		for (let k = 0; k < Math.min(early!.solutions.length, r.solutions.length); k++) {
			expect(compareKeys(rankKey(r.solutions[k]), rankKey(early!.solutions[k]))).toBeLessThanOrEqual(0);
		}
	}, 120_000);

	it('beam: the best so far carries its efficiency; an aborted search ends as cancelled', async () => {
		const req = solveRequestSchema.parse({ mode: 'beam', wavelengthNm: 1064, input: { waistDiameterMm: 1, waistPositionMm: -200, mSquared: 1.3 }, target: { waistDiameterMm: 0.5, waistPositionMm: 400 }, limit: 10 }) as ParsedBeamRequest;
		const seen: SolveProgress[] = [];
		await solveBeamWithStock(stock, req, { onProgress: (p) => seen.push(p), progressEveryMs: 20 });
		expect(seen.at(-1)!.fraction).toBe(1);
		const best = seen.at(-1)!.best!;
		expect(best.efficiency).toBeGreaterThan(0);
		expect(best.efficiency).toBeLessThanOrEqual(1);

		const abort = new AbortController();
		const run = solveBeamWithStock(stock, req, {
			signal: abort.signal,
			progressEveryMs: 5,
			onProgress: () => abort.abort()
		});
		await expect(run).rejects.toMatchObject({ status: 499, code: 'cancelled' });
	}, 120_000);
});
