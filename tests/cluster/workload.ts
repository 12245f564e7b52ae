/**
 * A mixed stock workload through the HTTP API: receive, issue, return, move and adjust on a few
 * shared parts, chosen by a seeded generator (mulberry32), so the runs are the same every time.
 */
import { inArray } from 'drizzle-orm';
import { mulberry32 } from '../../src/lib/prng';
import * as t from '../../src/lib/server/db/schema';
import * as parts from '../../src/lib/server/catalogue/parts';
import * as ops from '../../src/lib/server/stock/operations';
import { call, type Answer } from './support';
import type { createDb } from '../../src/lib/server/db/client';

type Db = ReturnType<typeof createDb>['db'];

export interface Fixture {
	partIds: number[];
	locations: [number, number];
	stockroomId: number;
}

/** `count` new parts with `units` usable units each at the first location (written through `db`). */
export async function stockFixture(db: Db, tag: string, count: number, units: number): Promise<Fixture> {
	const [stockroom] = await db.select({ id: t.users.id }).from(t.users).where(inArray(t.users.role, ['stockroom'])).limit(1);
	const locs = await db.select({ id: t.locations.id }).from(t.locations).orderBy(t.locations.code).limit(2);
	const partIds: number[] = [];
	for (let i = 0; i < count; i++) {
		const { id } = await parts.createPart(db, { sku: `${tag}-${i}`, name: `Cluster load ${tag} ${i}`, kind: 'other', diameterMm: 25, eflMm: 100 }, { id: stockroom.id });
		await ops.receive(db, { partId: id, quantity: units, locationId: locs[0].id }, { id: stockroom.id });
		partIds.push(id);
	}
	return { partIds, locations: [locs[0].id, locs[1].id], stockroomId: stockroom.id };
}

/** One random operation as [path, body]. */
export function nextOperation(rnd: () => number, f: Fixture): [string, Record<string, unknown>] {
	const partId = f.partIds[Math.floor(rnd() * f.partIds.length)];
	const [a, b] = rnd() < 0.5 ? f.locations : ([f.locations[1], f.locations[0]] as const);
	const n = 1 + Math.floor(rnd() * 3);
	const r = rnd();
	if (r < 0.3) return ['/api/v1/stock/issue', { partId, quantity: n, locationId: a, issuedTo: 'cluster bench' }];
	if (r < 0.5) return ['/api/v1/stock/return', { partId, quantity: n, locationId: a, issuedTo: 'cluster bench' }];
	if (r < 0.7) return ['/api/v1/stock/receive', { partId, quantity: n, locationId: a }];
	if (r < 0.9) return ['/api/v1/stock/move', { partId, quantity: n, fromLocationId: a, toLocationId: b }];
	return ['/api/v1/stock/adjust', { partId, locationId: a, delta: rnd() < 0.5 ? -n : n, reason: 'cycle count' }];
}

export interface RunResult {
	answers: Answer[];
	ms: number;
	/** Count per HTTP status (0: no answer). */
	byStatus: Record<number, number>;
}

/** `workers` sequential clients, client k sending `perWorker` operations to `targets[k % targets.length]`. */
export async function runWorkload(opts: { cookie: string; targets: string[]; workers: number; perWorker: number; seed: number; fixture: Fixture; stopAt?: () => boolean }) {
	const start = performance.now();
	const answers: Answer[] = [];
	await Promise.all(
		Array.from({ length: opts.workers }, async (_, k) => {
			const rnd = mulberry32(opts.seed * 1000 + k);
			const base = opts.targets[k % opts.targets.length];
			for (let i = 0; i < opts.perWorker && !opts.stopAt?.(); i++) {
				const [path, body] = nextOperation(rnd, opts.fixture);
				answers.push(await call(base, opts.cookie, 'POST', path, body));
			}
		})
	);
	const byStatus: Record<number, number> = {};
	for (const a of answers) byStatus[a.status] = (byStatus[a.status] ?? 0) + 1;
	return { answers, ms: performance.now() - start, byStatus } satisfies RunResult;
}

/** Statuses that are neither a success nor the expected 409 refusal, with a sample body each. */
export function unexpected(r: RunResult) {
	return r.answers.filter((a) => a.status !== 201 && a.status !== 409).map((a) => `${a.status} ${typeof a.body === 'string' ? a.body.slice(0, 160) : JSON.stringify(a.body).slice(0, 160)}`);
}
