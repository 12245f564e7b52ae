/**
 * The solver's limits, which protect the instance's two cores: the time budget and cancellation
 * stop a search and mark it truncated (checked on the kernel with a deadline already passed and
 * a cancel flag already set, so no test depends on how fast the machine is), an aborted request
 * ends with 499 through the worker pool, and the service admits at most MAX_PER_USER solves of
 * one user and MAX_ACTIVE in all at the same time (429 beyond).
 */
import { describe, expect, it, vi } from 'vitest';
import { imagingRequestSchema as solveRequestSchema } from '../../../src/lib/solver/request';
import { buildElementSnapshot, type CandidatePart } from '../../../src/lib/server/solver/elements';
import { searchShard, type SearchParams } from '../../../src/lib/solver/search/search-kernel';
import { solveWithStock, type StockView } from '../../../src/lib/server/solver/solve';
import { syntheticStock } from '../../bench/_synthetic-stock';

// The service reads the stock from the database; here it gets an invented one.
const stockForService: { view: StockView | null } = { view: null };
vi.mock('../../../src/lib/server/solver/load-stock', () => ({ stockView: async () => stockForService.view }));
const service = await import('../../../src/lib/server/solver/service');

const question = { wavelengthNm: 587.6, trackMm: 400, magnification: -1, objectNA: 0.02, objectHeightMm: 1, minGapMm: 0.5, minWorkingDistanceMm: 2, limit: 10 };
const parts: CandidatePart[] = syntheticStock(300, 11);
const view = (p: CandidatePart[]): StockView => ({ key: `limits-${p.length}-${Math.random()}`, parts: p });

function shardInput(extra: { deadline: number; cancel?: Int32Array | null }) {
	const snap = buildElementSnapshot(parts, 587.6);
	const params: SearchParams = { ...question, trackToleranceMm: 0, magnificationTolerance: 0.01, maxElements: 2, rankByBand: false, limit: 10 };
	return {
		packed: snap.packed,
		seidel: snap.seidel,
		partIndex: snap.partIndex,
		untraceable: new Uint8Array(snap.elements.length),
		rays: snap.rays,
		coatOut: snap.coatOut,
		partUnits: Int32Array.from(snap.parts.map(() => 3)),
		candidates: Int32Array.from(snap.elements.map((_, i) => i)),
		params,
		shardIndex: 0,
		shardCount: 1,
		topK: 50,
		...extra
	};
}

describe('time budget and cancellation', () => {
	it('stops the pair search at the deadline or at the cancel flag and says it was truncated', () => {
		const full = searchShard(shardInput({ deadline: Date.now() + 60_000 }));
		expect(full.truncated).toBe(false);
		const late = searchShard(shardInput({ deadline: Date.now() - 1 }));
		expect(late.truncated).toBe(true);
		const cancel = new Int32Array(new SharedArrayBuffer(4));
		Atomics.store(cancel, 0, 1);
		const cancelled = searchShard(shardInput({ deadline: Date.now() + 60_000, cancel }));
		expect(cancelled.truncated).toBe(true);
		// Stopped before the first pair row: only the single parts were tried.
		expect(late.configurationsEvaluated).toBeLessThan(full.configurationsEvaluated / 10);
		expect(cancelled.configurationsEvaluated).toBe(late.configurationsEvaluated);
	});

	it('answers an aborted request with 499 through the worker pool', async () => {
		const req = solveRequestSchema.parse(question);
		const controller = new AbortController();
		controller.abort();
		await expect(solveWithStock(view(parts), req, { signal: controller.signal })).rejects.toMatchObject({ status: 499, code: 'cancelled' });
		// The same question without the abort is answered.
		const ok = await solveWithStock(view(parts), req);
		expect(ok.stats.truncated).toBe(false);
	});
});

describe('admission', () => {
	it('admits two solves of one user at a time and six in all; more get 429 until one ends', async () => {
		stockForService.view = view(parts.slice(0, 40));
		expect(service.MAX_PER_USER).toBe(2);
		expect(service.MAX_ACTIVE).toBe(6);
		const db = {} as never;
		// The admission check runs before the first await, so calls made in a row overlap for certain.
		const a = service.solve(db, question, { id: 1 });
		const b = service.solve(db, question, { id: 1 });
		const c = service.solve(db, question, { id: 1 });
		await expect(c).rejects.toMatchObject({ status: 429, code: 'too-many-requests' });
		const others = [2, 3, 4, 5].map((id) => service.solve(db, question, { id }));
		const seventh = service.solve(db, question, { id: 6 });
		await expect(seventh).rejects.toMatchObject({ status: 429 });
		const done = await Promise.all([a, b, ...others]);
		expect(done.every((r) => r.stats.truncated === false)).toBe(true);
		// All ended: admitted again.
		await expect(service.solve(db, question, { id: 1 })).resolves.toHaveProperty('solutions');
		// A refused request (bad input) does not take a place.
		await expect(service.solve(db, { ...question, trackMm: -5 }, { id: 1 })).rejects.toThrow();
		await Promise.all([service.solve(db, question, { id: 1 }), service.solve(db, question, { id: 1 })]);
	});
});
