/**
 * Unlocks against the demo stock through the built app: a saved setup that loses its part's
 * availability shows up on the board ("setups unlocked") and in the unlock answer, and the
 * solver-backed search names a purchase that really is the one missing part of its solution.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, inArray } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as res from '../../../src/lib/server/stock/reservations';
import { totalsOf } from '../../../src/lib/server/stock/availability';
import { api, cookieFor } from '../accounts/helpers';
import { people } from './helpers';

const { db, pool } = testDb();
const held: number[] = [];
let engineer = '';
let purchaser = '';
let who: Awaited<ReturnType<typeof people>>;

beforeAll(async () => {
	who = await people(db);
	[engineer, purchaser] = await Promise.all([cookieFor('engineer@tarnwell.example'), cookieFor('purchaser@tarnwell.example')]);
});
afterAll(async () => {
	if (held.length) await db.update(t.reservations).set({ status: 'released' }).where(inArray(t.reservations.id, held));
	await pool.end();
});

const question = { maxElements: 1, magnificationTolerance: 0.1, trackMm: 450, magnification: -0.5, objectNA: 0.01, objectHeightMm: 2, minGapMm: 1, minWorkingDistanceMm: 5, limit: 5 };

describe('unlocks', () => {
	it('a saved setup short of one part: the board counts it for that part, and the unlock search names a real single purchase', async () => {
		const solved = await (await api('POST', '/api/v1/solve', { cookie: engineer }, question)).json();
		expect(solved.solutions.length).toBeGreaterThan(0);
		const s = solved.solutions[0];
		const choice = { elements: s.elements.map((e: { partId: number; reversed: boolean }) => ({ partId: e.partId, reversed: e.reversed })), objectDistanceMm: s.objectDistanceMm, gapsMm: s.gapsMm, backDistanceMm: s.backDistanceMm };
		const saved = await api('POST', '/api/v1/setups', { cookie: engineer }, { name: `Unlock check ${Date.now()}`, query: solved.request, choice });
		expect(saved.status).toBe(201);
		const setup = await saved.json();
		const partId: number = s.elements[0].partId;

		// someone else holds every available unit: the setup can no longer be built from stock
		const { available } = await totalsOf(db, partId);
		expect(available).toBeGreaterThan(0);
		const r = await db.transaction((tx) => res.reserve(tx, { partId, quantity: available, until: new Date(Date.now() + 86_400_000), userId: who.engineer2.id, note: 'unlock test' }));
		held.push(r.id);

		const board = await (await api('GET', '/api/v1/reorder', { cookie: purchaser })).json();
		const row = board.items.find((x: { partId: number }) => x.partId === partId);
		expect(row, 'the part is on the board').toBeDefined();
		expect(row.available).toBe(0);
		expect(row.setupsUnlocked).toBeGreaterThanOrEqual(1);
		expect(row.unlocks.map((u: { setupId: number }) => u.setupId)).toContain(setup.id);
		expect(row.setupsUsing).toBeGreaterThanOrEqual(row.setupsUnlocked);

		const ans = await api('POST', '/api/v1/reorder/unlock', { cookie: purchaser }, { setupId: setup.id });
		expect(ans.status).toBe(200);
		const body = await ans.json();
		expect(body.setupBuildable).toBe(false);
		expect(body.setupShort).toEqual([expect.objectContaining({ partId, quantity: 1, sku: s.elements[0].sku })]);
		expect(body.stats.solutionsSearched).toBeGreaterThan(0);
		// the setup's own solution is a candidate of the catalogue-wide search, so a single purchase exists
		expect(body.purchase).not.toBeNull();
		{
			// the purchase is a part its solution needs more of than is available, and the only such part
			const [p] = await db.select().from(t.parts).where(eq(t.parts.sku, body.purchase.sku));
			const need = body.purchase.solution.skus.filter((k: string) => k === p.sku).length;
			expect((await totalsOf(db, p.id)).available).toBeLessThan(need);
			for (const other of new Set<string>(body.purchase.solution.skus.filter((k: string) => k !== p.sku))) {
				const [o] = await db.select().from(t.parts).where(eq(t.parts.sku, other));
				expect((await totalsOf(db, o.id)).available).toBeGreaterThan(0);
			}
			expect(body.purchase.quantity).toBe(need - (await totalsOf(db, p.id)).available);
			expect(body.purchase).toHaveProperty('leadTimeDays');
			expect(body.purchase).toHaveProperty('unitPrice');
		}
	});

	it('answers a plain question too, and refuses a malformed body', async () => {
		const ok = await api('POST', '/api/v1/reorder/unlock', { cookie: engineer }, { question });
		expect(ok.status).toBe(200);
		const body = await ok.json();
		expect(body).toHaveProperty('bestFromStock');
		expect(body).toHaveProperty('purchase');
		expect((await api('POST', '/api/v1/reorder/unlock', { cookie: engineer }, {})).status).toBe(400);
		expect((await api('POST', '/api/v1/reorder/unlock', { cookie: engineer }, { question: { ...question, trackMm: -1 } })).status).toBe(400);
	});
});
