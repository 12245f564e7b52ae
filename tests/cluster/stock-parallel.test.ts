/**
 * Stock operations from many clients at once, split across both app instances (so across two
 * database nodes): the conditional updates and part locks that keep stock consistent on one server
 * must hold when the conflicts are found by Galera's certification instead (a deadlock error at
 * commit, retried by the transaction helper). Also measures the throughput of the same mixed
 * workload through one instance (one database node takes the writes) and through both, in one run.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inArray } from 'drizzle-orm';
import * as t from '../../src/lib/server/db/schema';
import { appUrls, conflictCount, figure, holdings, nodeDb, nodeUrls, signIn } from './support';
import { runWorkload, stockFixture, unexpected, type Fixture } from './workload';

const nodes = nodeUrls.map((_, i) => nodeDb(i + 1, 3));
const tag = `CP${Date.now().toString(36).toUpperCase()}`;
let fixture: Fixture;
let cookie = '';

beforeAll(async () => {
	fixture = await stockFixture(nodes[0].db, tag, 6, 40);
	cookie = await signIn('stockroom@tarnwell.example');
});
afterAll(async () => {
	if (fixture) await nodes[0].db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, fixture.partIds));
	for (const n of nodes) await n.pool.end();
});

const WORKERS = 8;
const PER_WORKER = 40;

describe('parallel stock operations across two instances', () => {
	it('split across A and B: 0 × 5xx, stock never negative, ledger = stock, all nodes agree', async () => {
		// warm up both instances (first requests compile routes, open pools)
		const warm = await runWorkload({ cookie, targets: appUrls, workers: 2, perWorker: 5, seed: 1, fixture });

		const conflictsBefore = await conflictCount(nodes.map((n) => n.db));
		const oneNode = await runWorkload({ cookie, targets: [appUrls[0]], workers: WORKERS, perWorker: PER_WORKER, seed: 2, fixture });
		const conflictsOne = (await conflictCount(nodes.map((n) => n.db))) - conflictsBefore;
		const split = await runWorkload({ cookie, targets: appUrls, workers: WORKERS, perWorker: PER_WORKER, seed: 3, fixture });
		const conflictsSplit = (await conflictCount(nodes.map((n) => n.db))) - conflictsBefore - conflictsOne;

		const rate = (r: { answers: unknown[]; ms: number }) => r.answers.length / (r.ms / 1000);
		figure('mixed stock operations through instance A only (node 1 takes every write)', `${rate(oneNode).toFixed(1)} ops/s`, JSON.stringify(oneNode.byStatus));
		figure('the same split across A and B (nodes 1 and 2 take writes)', `${rate(split).toFixed(1)} ops/s`, JSON.stringify(split.byStatus));
		figure('throughput ratio, split / one node (same run)', (rate(split) / rate(oneNode)).toFixed(2));
		figure('certification conflicts (cert failures + brute-force aborts, all nodes) during the split run', conflictsSplit, `${WORKERS * PER_WORKER} operations; ${conflictsOne} during the one-node run`);

		expect(unexpected(oneNode)).toEqual([]);
		expect(unexpected(split)).toEqual([]);
		expect(split.byStatus[201]).toBeGreaterThan(WORKERS * PER_WORKER * 0.4);

		const seen = [];
		for (const n of nodes) seen.push(await holdings(n.db, fixture.partIds));
		for (const h of seen) {
			expect(h.minQuantity).toBe(0);
			expect(h.ledger).toEqual(h.stock);
		}
		expect(seen[1]).toEqual(seen[0]);
		expect(seen[2]).toEqual(seen[0]);
		// every successful operation wrote exactly one movement (plus the fixture's receipts), a retried one too
		expect(unexpected(warm)).toEqual([]);
		const successes = [warm, oneNode, split].reduce((s, r) => s + (r.byStatus[201] ?? 0), 0);
		expect(seen[0].movements).toBe(successes + fixture.partIds.length);
	});
});
