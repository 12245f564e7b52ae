/**
 * Build from stock through the built app against the demo stock in MariaDB: the solve
 * endpoint (answers, validation with field names, roles), saving a setup (the server
 * re-evaluates the choice), reserving it in one step, and a reservation race that leaves the
 * stock consistent (never more reserved than on hand).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray, or, sql } from 'drizzle-orm';
import { testDb } from '../../support/env';
import { api, cookieFor } from '../accounts/helpers';
import * as t from '../../../src/lib/server/db/schema';
import { changeStock } from '../../../src/lib/server/stock/version';

const { db, pool } = testDb();
// Reservations this file makes on demo parts, released at the end so that later files (unlocks,
// the browser tests) see the demo stock as available as it was.
const heldIds: number[] = [];
const reservedSetups: number[] = [];
afterAll(async () => {
	const mine = [
		...(heldIds.length ? [inArray(t.reservations.id, heldIds)] : []),
		...(reservedSetups.length ? [inArray(t.reservations.setupId, reservedSetups)] : [])
	];
	if (mine.length) {
		await changeStock(db, async (tx) => {
			await tx.update(t.reservations).set({ status: 'released' }).where(and(eq(t.reservations.status, 'active'), or(...mine)));
		});
	}
	await pool.end();
});

let engineer: string, engineer2: string, purchaser: string;
beforeAll(async () => {
	[engineer, engineer2, purchaser] = await Promise.all([
		cookieFor('engineer@tarnwell.example'),
		cookieFor('engineer2@tarnwell.example'),
		cookieFor('purchaser@tarnwell.example')
	]);
});

const question = { trackMm: 300, magnification: -0.5, objectNA: 0.03, objectHeightMm: 2, minGapMm: 1, minWorkingDistanceMm: 5, limit: 5 };

describe('POST /api/v1/solve', () => {
	it('answers with ranked, verified solutions from available demo stock, with stats', async () => {
		const res = await api('POST', '/api/v1/solve', { cookie: engineer }, question);
		expect(res.status).toBe(200);
		const body = await res.json();
		expect(body.solutions.length).toBeGreaterThan(0);
		expect(body.stats.partsConsidered).toBeGreaterThan(10);
		expect(body.stats.configurationsEvaluated).toBeGreaterThan(1000);
		expect(body.stats.workers).toBeGreaterThanOrEqual(1);
		for (const [k, s] of body.solutions.entries()) {
			expect(s.rank).toBe(k + 1);
			expect(Math.abs(s.systemMatrix.B)).toBeLessThan(1e-6);
			for (const e of s.elements) {
				expect(e.available).toBeGreaterThan(0);
				expect(e.toBuy).toBe(false);
				expect(e.locations.length).toBeGreaterThan(0);
				expect(['measured', 'prescription', 'datasheet']).toContain(e.eflSource);
			}
			expect(s.spot.airyRadiusMm).toBeGreaterThan(0);
		}
	});

	it('with availableOnly false can include parts to buy; partIds restricts to a kit', async () => {
		const [out] = await db.execute(sql`select p.id from parts p where p.archived_at is null and not exists (select 1 from stock s where s.part_id = p.id and s.condition = 'usable' and s.quantity > 0) limit 50`);
		const noStock = (out as unknown as { id: number }[]).map((r) => Number(r.id));
		expect(noStock.length).toBeGreaterThan(0);
		const kit = await api('POST', '/api/v1/solve', { cookie: engineer }, { ...question, availableOnly: false, partIds: noStock, limit: 20, objectNA: 0.01 });
		const body = await kit.json();
		expect(kit.status).toBe(200);
		for (const s of body.solutions) for (const e of s.elements) {
			expect(noStock).toContain(e.partId);
			expect(e.toBuy).toBe(true);
		}
		const onlyAvail = await (await api('POST', '/api/v1/solve', { cookie: engineer }, { ...question, partIds: noStock })).json();
		expect(onlyAvail.solutions).toEqual([]);
	});

	it.each([
		[{ ...question, trackMm: 0 }, 'trackMm'],
		[{ ...question, magnification: 0 }, 'magnification'],
		[{ ...question, objectNA: 1 }, 'objectNA'],
		[{ ...question, wavelengthNm: 11000 }, 'wavelengthNm'],
		[{ ...question, minWorkingDistanceMm: -3 }, 'minWorkingDistanceMm'],
		[{ ...question, limit: 0 }, 'limit']
	])('400 for %j, naming %s', async (body, field) => {
		const res = await api('POST', '/api/v1/solve', { cookie: engineer }, body);
		expect(res.status).toBe(400);
		const json = await res.json();
		expect(Object.keys(json.error.fields)).toContain(field);
	});

	it('403 for a purchaser, 401 without a session, 415 for a non-JSON body', async () => {
		expect((await api('POST', '/api/v1/solve', { cookie: purchaser }, question)).status).toBe(403);
		expect((await api('POST', '/api/v1/solve', {}, question)).status).toBe(401);
		const res = await fetch(new URL('/api/v1/solve', process.env.APP_URL), { method: 'POST', headers: { cookie: engineer, origin: process.env.APP_URL!, 'content-type': 'text/plain' }, body: 'x' });
		expect(res.status).toBe(415);
	});
});

describe('track tolerance', () => {
	const single = { ...question, maxElements: 1, magnification: -1, magnificationTolerance: 0, objectNA: 0.01, trackMm: 450, limit: 10 };

	it('a single-part question with no exact track says where the nearest parts work, with their figures', async () => {
		const res = await api('POST', '/api/v1/solve', { cookie: engineer }, single);
		expect(res.status).toBe(200);
		const body = await res.json();
		expect(body.solutions).toEqual([]);
		expect(body.noAnswer.nearTracks.length).toBeGreaterThan(0);
		const near = body.noAnswer.nearTracks[0];
		expect(body.noAnswer.hint).toContain(`works at ${Math.round(near.trackMm * 10) / 10} mm`);
		expect(near.magnification).toBeCloseTo(-1, 6);
		expect(Math.abs(near.trackOffsetMm)).toBeGreaterThan(0);
	});

	it('with a tolerance that reaches it, that part answers at its own track; the setup saves within the tolerance and not beyond', async () => {
		const first = await (await api('POST', '/api/v1/solve', { cookie: engineer }, single)).json();
		const near = first.noAnswer.nearTracks[0];
		const tol = Math.ceil(Math.abs(near.trackOffsetMm)) + 1;
		const res = await api('POST', '/api/v1/solve', { cookie: engineer }, { ...single, trackToleranceMm: tol });
		const body = await res.json();
		expect(res.status).toBe(200);
		expect(body.solutions.length).toBeGreaterThan(0);
		for (const s of body.solutions) {
			expect(Math.abs(s.trackOffsetMm)).toBeLessThanOrEqual(tol + 1e-9);
			expect(s.trackMm).toBeCloseTo(450 + s.trackOffsetMm, 9);
			expect(s.objectDistanceMm + s.elements[0].thicknessMm + s.backDistanceMm).toBeCloseTo(s.trackMm, 6);
			expect(s.magnification).toBeCloseTo(-1, 6);
		}
		const s = body.solutions.find((x: { elements: { sku: string }[] }) => x.elements[0].sku === near.skus[0]);
		expect(s).toBeDefined();
		expect(s.trackMm).toBeCloseTo(near.trackMm, 6);
		const choice = { elements: [{ partId: s.elements[0].partId, reversed: s.elements[0].reversed }], objectDistanceMm: s.objectDistanceMm, gapsMm: [], backDistanceMm: s.backDistanceMm };
		const saved = await api('POST', '/api/v1/setups', { cookie: engineer }, { name: 'Track tolerance check', query: body.request, choice });
		expect(saved.status).toBe(201);
		expect((await saved.json()).solution.trackOffsetMm).toBeCloseTo(s.trackOffsetMm, 6);
		const strict = await api('POST', '/api/v1/setups', { cookie: engineer }, { name: 'Track tolerance check', query: { ...body.request, trackToleranceMm: 0 }, choice });
		expect(strict.status).toBe(400);
		expect((await strict.json()).error.fields.choice).toMatch(/add up to the track/);
	});

	it('400 naming trackToleranceMm for a negative tolerance or one as long as the track', async () => {
		for (const trackToleranceMm of [-1, 450]) {
			const res = await api('POST', '/api/v1/solve', { cookie: engineer }, { ...single, trackToleranceMm });
			expect(res.status).toBe(400);
			expect(Object.keys((await res.json()).error.fields)).toContain('trackToleranceMm');
		}
	});
});

async function firstSolution(cookie: string, extra: Record<string, unknown> = {}) {
	const res = await api('POST', '/api/v1/solve', { cookie }, { ...question, ...extra });
	const body = await res.json();
	const s = body.solutions[0];
	return {
		query: body.request,
		solution: s,
		choice: {
			elements: s.elements.map((e: { partId: number; reversed: boolean }) => ({ partId: e.partId, reversed: e.reversed })),
			objectDistanceMm: s.objectDistanceMm,
			gapsMm: s.gapsMm,
			backDistanceMm: s.backDistanceMm
		}
	};
}

describe('setups', () => {
	it('saves a chosen solution after re-evaluating it, and refuses a doctored one', async () => {
		const { query, solution, choice } = await firstSolution(engineer);
		const res = await api('POST', '/api/v1/setups', { cookie: engineer }, { name: 'Relay check', query, choice });
		expect(res.status).toBe(201);
		const setup = await res.json();
		expect(setup.solution.magnification).toBeCloseTo(solution.magnification, 9);
		expect(setup.solution.elements.map((e: { sku: string }) => e.sku)).toEqual(solution.elements.map((e: { sku: string }) => e.sku));
		const again = await api('GET', `/api/v1/setups/${setup.id}`, { cookie: engineer2 });
		expect(again.status).toBe(200);
		const bad = await api('POST', '/api/v1/setups', { cookie: engineer }, { name: 'Doctored', query, choice: { ...choice, objectDistanceMm: choice.objectDistanceMm + 7, backDistanceMm: choice.backDistanceMm - 7 } });
		expect(bad.status).toBe(400);
		expect((await bad.json()).error.fields.choice).toBeDefined();
		expect((await api('GET', '/api/v1/setups/99999999', { cookie: engineer })).status).toBe(404);
	});

	it('reserves a setup in one step; a race for the last unit gives one 201 and one 409, and stock stays consistent', async () => {
		const { query, choice, solution } = await firstSolution(engineer, { maxElements: 1, magnificationTolerance: 0.1, trackMm: 450, objectNA: 0.01 });
		const partId = solution.elements[0].partId;
		const res = await api('POST', '/api/v1/setups', { cookie: engineer }, { name: 'Race', query, choice });
		const setup = await res.json();
		reservedSetups.push(setup.id);
		// Reserve all units but one for someone else, so exactly one unit is left.
		const [{ onHand }] = (await db.execute(sql`select coalesce(sum(quantity),0) as onHand from stock where part_id = ${partId} and \`condition\` = 'usable'`))[0] as unknown as { onHand: number }[];
		const [{ held }] = (await db.execute(sql`select coalesce(sum(quantity),0) as held from reservations where part_id = ${partId} and status = 'active' and until > utc_timestamp()`))[0] as unknown as { held: number }[];
		const spare = Number(onHand) - Number(held) - 1;
		const [admin] = await db.select().from(t.users).where(eq(t.users.role, 'admin'));
		if (spare > 0) {
			await changeStock(db, async (tx) => {
				const [hold] = await tx.insert(t.reservations).values({ partId, userId: admin.id, quantity: spare, until: new Date(Date.now() + 86_400_000), note: 'test: hold all but one' }).$returningId();
				heldIds.push(hold.id);
			});
		}
		const until = new Date(Date.now() + 7 * 86_400_000).toISOString();
		const [a, b] = await Promise.all([
			api('POST', `/api/v1/setups/${setup.id}/reservations`, { cookie: engineer }, { until }),
			api('POST', `/api/v1/setups/${setup.id}/reservations`, { cookie: engineer2 }, { until })
		]);
		expect([a.status, b.status].sort()).toEqual([201, 409]);
		const loser = a.status === 409 ? a : b;
		expect((await loser.json()).error.code).toBe('insufficient-stock');
		const [{ reserved }] = (await db.execute(sql`select coalesce(sum(quantity),0) as reserved from reservations where part_id = ${partId} and status = 'active' and until > utc_timestamp()`))[0] as unknown as { reserved: number }[];
		expect(Number(reserved)).toBe(Number(onHand));
		const rows = await db.select().from(t.reservations).where(and(eq(t.reservations.setupId, setup.id), eq(t.reservations.status, 'active')));
		expect(rows).toHaveLength(1);
		// The solver no longer offers the part as available.
		const after = await (await api('POST', '/api/v1/solve', { cookie: engineer }, { ...query, partIds: [partId] })).json();
		expect(after.solutions).toEqual([]);
	});
});
