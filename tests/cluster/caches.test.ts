/**
 * Per-process caches see what the other instance wrote. The solver keeps a stock snapshot per
 * process keyed by the stock version (bumped in the same transaction as every stock change) and
 * reloads it after 60 s anyway (reservations expire). So a stock change through instance A must
 * show in instance B's very next solve: B reads the version from its node, and the nodes run with
 * wsrep_sync_wait=1 (causal reads), so that read already sees A's commit.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, gt } from 'drizzle-orm';
import * as t from '../../src/lib/server/db/schema';
import { appUrls, call, nodeDb, signIn } from './support';

const node1 = nodeDb(1, 2);
let engineer = '';
let stockroom = '';
const restore: { partId: number; locationId: number; quantity: number }[] = [];

beforeAll(async () => {
	[engineer, stockroom] = await Promise.all([signIn('engineer@tarnwell.example'), signIn('stockroom@tarnwell.example')]);
});
afterAll(async () => {
	await node1.pool.end();
});

// one-element setups from the demo stock (the question of the single-server solver tests)
const question = { trackMm: 450, magnification: -0.5, objectNA: 0.01, objectHeightMm: 2, minGapMm: 1, minWorkingDistanceMm: 5, magnificationTolerance: 0.1, maxElements: 1, limit: 3 };
const [A, B] = appUrls;

describe('caches across instances', () => {
	it('a stock change through A shows in B’s next solve, both ways', async () => {
		const first = await call(B, engineer, 'POST', '/api/v1/solve', question);
		expect(first.status).toBe(200);
		expect(first.body.solutions.length).toBeGreaterThan(0);
		const partId: number = first.body.solutions[0].elements[0].partId;
		const only = { ...question, partIds: [partId] };
		expect((await call(B, engineer, 'POST', '/api/v1/solve', only)).body.solutions.length).toBeGreaterThan(0); // B's snapshot is warm

		// take every usable unit of the part away through A (an adjustment is never refused for reservations)
		const buckets = await node1.db
			.select({ locationId: t.stock.locationId, quantity: t.stock.quantity })
			.from(t.stock)
			.where(and(eq(t.stock.partId, partId), eq(t.stock.condition, 'usable'), gt(t.stock.quantity, 0)));
		expect(buckets.length).toBeGreaterThan(0);
		try {
			for (const b of buckets) {
				const r = await call(A, stockroom, 'POST', '/api/v1/stock/adjust', { partId, locationId: b.locationId, delta: -b.quantity, reason: 'cluster cache check' });
				expect(r.status).toBe(201);
				restore.push({ partId, ...b });
			}
			const gone = await call(B, engineer, 'POST', '/api/v1/solve', only);
			expect(gone.status).toBe(200);
			expect(gone.body.solutions).toEqual([]);
		} finally {
			for (const b of restore.splice(0)) {
				const r = await call(A, stockroom, 'POST', '/api/v1/stock/adjust', { partId: b.partId, locationId: b.locationId, delta: b.quantity, reason: 'cluster cache check' });
				expect(r.status).toBe(201);
			}
		}
		const back = await call(B, engineer, 'POST', '/api/v1/solve', only);
		expect(back.body.solutions.length).toBeGreaterThan(0);
		expect(back.body.solutions[0].elements[0].partId).toBe(partId);
		// and the other way round: B's change, A's solve
		expect((await call(A, engineer, 'POST', '/api/v1/solve', only)).body.solutions.length).toBeGreaterThan(0);
		const r = await call(B, stockroom, 'POST', '/api/v1/stock/adjust', { partId, locationId: buckets[0].locationId, delta: -buckets[0].quantity, reason: 'cluster cache check' });
		expect(r.status).toBe(201);
		try {
			if (buckets.length === 1) expect((await call(A, engineer, 'POST', '/api/v1/solve', only)).body.solutions).toEqual([]);
		} finally {
			await call(B, stockroom, 'POST', '/api/v1/stock/adjust', { partId, locationId: buckets[0].locationId, delta: buckets[0].quantity, reason: 'cluster cache check' });
		}
	});
});
