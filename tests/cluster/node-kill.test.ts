/**
 * A database node dies in the middle of a run: node 2, the one instance B uses, is killed (SIGKILL)
 * while clients keep sending stock operations through HAProxy. The cluster drops the node after its
 * suspect timeout, HAProxy takes B out once B's /health answers 503, and instance A on node 1 serves
 * everything. Then node 2 is started again, catches up (IST from a donor's gcache) and B returns.
 * At the end all three nodes hold the same stock and ledger, and ledger = stock.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inArray } from 'drizzle-orm';
import * as t from '../../src/lib/server/db/schema';
import { mulberry32 } from '../../src/lib/prng';
import { call, controlNode, figure, holdings, lbUrl, nodeDb, nodeStatus, signIn, sleep, type Answer } from './support';
import { nextOperation, stockFixture, type Fixture } from './workload';

const node1 = nodeDb(1, 3);
const tag = `CK${Date.now().toString(36).toUpperCase()}`;
let fixture: Fixture;
let cookie = '';

beforeAll(async () => {
	fixture = await stockFixture(node1.db, tag, 4, 60);
	cookie = await signIn('stockroom@tarnwell.example');
});
afterAll(async () => {
	// Never leave the cluster short of a node for the files after this one.
	if ((await controlNode(2, 'state').catch(() => null)) !== 'Synced') await controlNode(2, 'start').catch(() => {});
	if (fixture) await node1.db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, fixture.partIds));
	await node1.pool.end();
});

interface Stamped extends Answer {
	at: number;
}

describe('a Galera node killed mid-run', () => {
	it('the app keeps serving through the other node, the node rejoins, all three agree on the ledger', async () => {
		const t0 = performance.now();
		const answers: Stamped[] = [];
		let stop = false;
		const clients = Array.from({ length: 4 }, async (_, k) => {
			const rnd = mulberry32(700 + k);
			// bounded: at most 2000 operations per client, and the run below ends them
			for (let i = 0; i < 2000 && !stop; i++) {
				const [path, body] = nextOperation(rnd, fixture);
				const a = await call(lbUrl, cookie, 'POST', path, body, 30_000);
				answers.push({ ...a, at: performance.now() - t0 });
			}
		});

		await sleep(3000);
		const killedAt = performance.now() - t0;
		await controlNode(2, 'kill');
		// Galera's own view: how long until node 1 counts two members again
		let clusterShrunkAt = -1;
		for (let i = 0; i < 120 && clusterShrunkAt < 0; i++) {
			const s = await nodeStatus(node1.db, ['wsrep_cluster_size']).catch(() => null);
			if (s && Number(s.wsrep_cluster_size) === 2) clusterShrunkAt = performance.now() - t0;
			else await sleep(250);
		}
		await sleep(12_000);
		const restartAt = performance.now() - t0;
		expect(await controlNode(2, 'start')).toBe('Synced');
		const rejoinedAt = performance.now() - t0;
		await sleep(4000);
		stop = true;
		await Promise.all(clients);

		const ok = (a: Answer) => a.status === 201 || a.status === 409;
		const failures = answers.filter((a) => !ok(a));
		const lastFailure = Math.max(killedAt, ...failures.map((a) => a.at));
		// the longest time without a successful answer after the kill
		const okTimes = answers.filter((a) => ok(a) && a.at > killedAt).map((a) => a.at).sort((a, b) => a - b);
		let stall = okTimes.length ? okTimes[0] - killedAt : Infinity;
		for (let i = 1; i < okTimes.length; i++) stall = Math.max(stall, okTimes[i] - okTimes[i - 1]);
		const byStatus: Record<number, number> = {};
		for (const a of answers) byStatus[a.status] = (byStatus[a.status] ?? 0) + 1;

		figure('node killed: until the cluster counted 2 members', `${((clusterShrunkAt - killedAt) / 1000).toFixed(1)} s`);
		figure('node killed: longest time without a successful answer through HAProxy', `${(stall / 1000).toFixed(1)} s`);
		figure('node killed: failed answers, and the last one after the kill', `${failures.length} of ${answers.length}, at +${((lastFailure - killedAt) / 1000).toFixed(1)} s`, JSON.stringify(byStatus));
		figure('node restarted: until it was Synced again (IST)', `${((rejoinedAt - restartAt) / 1000).toFixed(1)} s`);

		expect(clusterShrunkAt).toBeGreaterThan(0);
		// The app kept serving: answers succeeded after the kill, and failures (requests caught on the
		// dying node's instance before HAProxy took it out) stopped within 15 s of the kill.
		expect(okTimes.length).toBeGreaterThan(20);
		expect(lastFailure - killedAt).toBeLessThan(15_000);
		// A request caught by the dying node is told to try again (503), never given a 500.
		expect(failures.filter((a) => a.status >= 500 && a.status !== 503)).toEqual([]);
		expect(answers.filter((a) => a.at > restartAt).every(ok)).toBe(true);
		expect(answers.filter((a) => a.at > rejoinedAt).length).toBeGreaterThan(5);

		// all three nodes: three members, synced, the same stock and ledger, and ledger = stock
		const seen = [];
		for (let n = 1; n <= 3; n++) {
			const node = nodeDb(n, 1);
			try {
				const s = await nodeStatus(node.db, ['wsrep_cluster_size', 'wsrep_local_state_comment']);
				expect(s).toEqual({ wsrep_cluster_size: '3', wsrep_local_state_comment: 'Synced' });
				seen.push(await holdings(node.db, fixture.partIds));
			} finally {
				await node.pool.end();
			}
		}
		for (const h of seen) {
			expect(h.minQuantity).toBe(0);
			expect(h.ledger).toEqual(h.stock);
		}
		expect(seen[1]).toEqual(seen[0]);
		expect(seen[2]).toEqual(seen[0]);
	});
});
