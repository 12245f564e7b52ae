/**
 * Mixed stock operations over HTTP, 16 at a time, on a few parts: receive, issue, return, move,
 * adjust, scrap, condition changes, reservations and their releases (issue 13: releasing while the
 * same part is issued deadlocked, 3 × 500 in 30). Asserts 0 × 5xx, that every refusal is a 4xx the
 * API documents, that the ledger equals the stock, nothing is negative, and no issue took units that
 * others reserved. Operations come from mulberry32 with a fixed seed, so a run can be repeated.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, inArray, sql } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { mulberry32 } from '../../../src/lib/prng';
import { api, cookieFor } from '../accounts/helpers';

const SEED = 0x5eed13;
const OPERATIONS = 400;
const AT_ONCE = 16;

const { db, pool } = testDb();
const tag = `CC${Date.now().toString(36).toUpperCase()}`;
const partIds: number[] = [];
let locA = 0;
let locB = 0;
const who: Record<'stockroom' | 'engineer' | 'engineer2', string> = { stockroom: '', engineer: '', engineer2: '' };

beforeAll(async () => {
	who.stockroom = await cookieFor('stockroom@tarnwell.example');
	who.engineer = await cookieFor('engineer@tarnwell.example');
	who.engineer2 = await cookieFor('engineer2@tarnwell.example');
	const locs = await (await api('GET', '/api/v1/locations', { cookie: who.stockroom })).json();
	[locA, locB] = [locs.items[0].id, locs.items[1].id];
	for (let i = 0; i < 3; i++) {
		const res = await api('POST', '/api/v1/parts', { cookie: who.stockroom }, { sku: `${tag}-${i}`, name: `Concurrency ${i}`, kind: 'other', diameterMm: 25, eflMm: 50 + i });
		expect(res.status).toBe(201);
		const { id } = await res.json();
		partIds.push(id);
		expect((await api('POST', '/api/v1/stock/receive', { cookie: who.stockroom }, { partId: id, quantity: 30, locationId: locA })).status).toBe(201);
	}
});

afterAll(async () => {
	await db.update(t.reservations).set({ status: 'released' }).where(inArray(t.reservations.partId, partIds));
	await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, partIds));
	await pool.end();
});

/** Runs `tasks` with at most `n` in flight. */
async function pooled<T>(tasks: (() => Promise<T>)[], n: number): Promise<T[]> {
	const out: T[] = new Array(tasks.length);
	let next = 0;
	await Promise.all(
		Array.from({ length: n }, async () => {
			while (next < tasks.length) {
				const i = next++;
				out[i] = await tasks[i]();
			}
		})
	);
	return out;
}

describe('mixed stock operations, 16 at a time', () => {
	it(`${OPERATIONS} operations: 0 × 5xx, the ledger equals the stock, nothing negative`, async () => {
		const rnd = mulberry32(SEED);
		const pick = <T>(xs: readonly T[]) => xs[Math.floor(rnd() * xs.length)];
		const reservationIds: { id: number; cookie: string }[] = [];
		const until = new Date(Date.now() + 3 * 86_400_000).toISOString();
		const people = ['engineer', 'engineer2'] as const;

		const tasks: (() => Promise<{ op: string; status: number }>)[] = [];
		for (let i = 0; i < OPERATIONS; i++) {
			const partId = pick(partIds);
			const q = 1 + Math.floor(rnd() * 3);
			const person = pick(people);
			const r = rnd();
			const [op, run]: [string, () => Promise<Response>] =
				r < 0.2
					? ['reserve', () => api('POST', '/api/v1/reservations', { cookie: who[person] }, { partId, quantity: q, until })]
					: r < 0.4
						? [
								'release',
								async () => {
									// A reservation made earlier in the run, each released at most once (or a made-up id when none is left: 404).
									const mine = reservationIds.length ? reservationIds.splice(Math.floor(rnd() * reservationIds.length), 1)[0] : { id: 99_999_999, cookie: who.engineer };
									return api('DELETE', `/api/v1/reservations/${mine.id}`, { cookie: mine.cookie });
								}
							]
						: r < 0.6
							? ['issue', () => api('POST', '/api/v1/stock/issue', { cookie: who[person] }, { partId, quantity: q, locationId: locA, issuedTo: 'bench 4' })]
							: r < 0.67
								? ['return', () => api('POST', '/api/v1/stock/return', { cookie: who[person] }, { partId, quantity: 1, locationId: locA })]
								: r < 0.75
									? ['receive', () => api('POST', '/api/v1/stock/receive', { cookie: who.stockroom }, { partId, quantity: q, locationId: locA })]
									: r < 0.83
										? ['move', () => api('POST', '/api/v1/stock/move', { cookie: who.stockroom }, { partId, quantity: 1, fromLocationId: pick([locA, locB]), toLocationId: locA === locB ? locB : pick([locA, locB]) })]
										: r < 0.9
											? ['adjust', () => api('POST', '/api/v1/stock/adjust', { cookie: who.stockroom }, { partId, locationId: locA, delta: pick([-2, -1, 1, 2]), reason: 'count check' })]
											: r < 0.95
												? ['scrap', () => api('POST', '/api/v1/stock/scrap', { cookie: who.stockroom }, { partId, quantity: 1, locationId: locA, condition: 'usable', reason: 'chipped' })]
												: ['condition', () => api('POST', '/api/v1/stock/condition', { cookie: who.stockroom }, { partId, quantity: 1, locationId: locA, from: 'usable', to: 'quarantine' })];
			tasks.push(async () => {
				const res = await run();
				const body = await res.json().catch(() => null);
				if (op === 'reserve' && res.status === 201) reservationIds.push({ id: body.id, cookie: who[person] });
				return { op, status: res.status };
			});
		}
		const results = await pooled(tasks, AT_ONCE);

		const byStatus: Record<string, number> = {};
		for (const r of results) byStatus[`${r.op} ${r.status}`] = (byStatus[`${r.op} ${r.status}`] ?? 0) + 1;
		console.log(`[concurrency] ${OPERATIONS} operations, ${AT_ONCE} at a time:`, JSON.stringify(byStatus));
		const fiveHundreds = results.filter((r) => r.status >= 500);
		expect(fiveHundreds, JSON.stringify(byStatus)).toEqual([]);
		// Every answer is a success or an expected refusal (not enough stock, released twice, a move to the same place).
		for (const r of results) expect([200, 201, 400, 404, 409]).toContain(r.status);
		expect(results.filter((r) => r.op === 'release' && r.status === 200).length).toBeGreaterThan(0);
		expect(results.filter((r) => r.op === 'issue' && r.status === 201).length).toBeGreaterThan(0);

		for (const partId of partIds) {
			const [rows] = await db.execute(sql`
				select b.location_id, b.cond, b.ledger, coalesce(s.quantity, 0) as stock from (
					select location_id, cond, sum(q) as ledger from (
						select to_location_id as location_id, to_condition as cond, quantity as q from movements where part_id = ${partId} and to_location_id is not null
						union all
						select from_location_id, from_condition, -quantity from movements where part_id = ${partId} and from_location_id is not null
					) m group by location_id, cond
				) b left join stock s on s.part_id = ${partId} and s.location_id = b.location_id and s.\`condition\` = b.cond`);
			for (const r of rows as unknown as { ledger: string; stock: number }[]) {
				expect(Number(r.ledger)).toBe(Number(r.stock));
				expect(Number(r.stock)).toBeGreaterThanOrEqual(0);
			}
			const stockRows = await db.select().from(t.stock).where(eq(t.stock.partId, partId));
			const ledgerTotal = (rows as unknown as { ledger: string }[]).reduce((s, r) => s + Number(r.ledger), 0);
			expect(stockRows.reduce((s, r) => s + r.quantity, 0)).toBe(ledgerTotal);
		}
	}, 300_000); // about 15 s on a quiet machine
});
