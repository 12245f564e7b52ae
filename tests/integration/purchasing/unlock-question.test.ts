/**
 * "What purchase would help?" through the built app against the demo data: a question that
 * available stock cannot answer gets a single purchase, and that purchase really gives the
 * setup: solving again over just the suggested solution's parts (availableOnly: false, as if
 * the part were on the shelf) finds it with the same figures. The /build form action answers
 * the same; a saved setup short of a part says which part on its page.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inArray } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as res from '../../../src/lib/server/stock/reservations';
import { totalsOf } from '../../../src/lib/server/stock/availability';
import { waitingSetups } from '../../../src/lib/server/purchasing/board';
import { api, cookieFor, url } from '../accounts/helpers';
import { people } from './helpers';

const { db, pool } = testDb();
const held: number[] = [];
let engineer = '';
let who: Awaited<ReturnType<typeof people>>;

beforeAll(async () => {
	who = await people(db);
	engineer = await cookieFor('engineer@tarnwell.example');
});
afterAll(async () => {
	if (held.length) await db.update(t.reservations).set({ status: 'released' }).where(inArray(t.reservations.id, held));
	await pool.end();
});

// One part at m = −0.5 over 4.5 m wants f ≈ 1000 mm (thin lens: s = 3f, s' = 1.5f; from memory):
// the demo catalogue has such a part, the demo shelf has none.
const question = { maxElements: 1, trackMm: 4500, magnification: -0.5, objectNA: 0.003, objectHeightMm: 1, minGapMm: 1, minWorkingDistanceMm: 5 };

describe('a purchase for a question the shelf cannot answer', () => {
	it('suggests one part that, once in stock, gives the setup', async () => {
		const fromStock = await (await api('POST', '/api/v1/solve', { cookie: engineer }, question)).json();
		expect(fromStock.solutions, 'nothing on the shelf answers it').toEqual([]);

		const ans = await api('POST', '/api/v1/reorder/unlock', { cookie: engineer }, { question });
		expect(ans.status, 'engineers may ask').toBe(200);
		const body = await ans.json();
		expect(body.bestFromStock).toBeNull();
		expect(body.purchase).not.toBeNull();
		const p = body.purchase;
		expect(p.betterThanStock).toBe(true);
		expect(p.solution.partIds).toContain(p.partId);
		expect(p.solution.skus).toContain(p.sku);
		expect(p.quantity).toBeGreaterThanOrEqual(1);
		// price, supplier and lead time come from the part's purchasing fields
		const [part] = await db.select().from(t.parts).where(inArray(t.parts.id, [p.partId]));
		expect(p.unitPrice).toBe(part.unitPriceMinor === null ? null : part.unitPriceMinor / 100);
		expect(p.leadTimeDays).toBe(part.leadTimeDays);
		// the purchase is what is missing: the part has fewer available units than the setup uses
		const uses = p.solution.partIds.filter((id: number) => id === p.partId).length;
		expect(p.quantity).toBe(uses - (await totalsOf(db, p.partId)).available);

		// As if the part were on the shelf: solve over just the suggestion's parts, stock or not.
		const again = await (
			await api('POST', '/api/v1/solve', { cookie: engineer }, { ...question, availableOnly: false, partIds: [...new Set(p.solution.partIds)] })
		).json();
		expect(again.solutions.length).toBeGreaterThan(0);
		const same = again.solutions.find(
			(s: { elements: { partId: number }[] }) => JSON.stringify(s.elements.map((e) => e.partId)) === JSON.stringify(p.solution.partIds)
		);
		expect(same, 'the suggested setup is an answer once the part counts').toBeDefined();
		expect(same.magnification).toBeCloseTo(p.solution.magnification, 9);
		expect(Math.abs(same.magnification - question.magnification)).toBeLessThan(0.02 * Math.abs(question.magnification));
		expect(Math.abs(same.systemMatrix.B)).toBeLessThan(1e-6); // imaging: B = 0 (DESIGN.md conventions)
		expect(same.spot.ratioToAiry).toBeCloseTo(p.solution.ratioToAiry, 6);
		expect(same.objectDistanceMm).toBeCloseTo(p.solution.objectDistanceMm, 6);
		expect(same.objectDistanceMm + same.elements[0].thicknessMm + same.backDistanceMm).toBeCloseTo(question.trackMm, 6);
		for (const e of same.elements) if (e.partId === p.partId) expect(e.toBuy || e.available < uses).toBe(true);
	});

	it('the /build form action gives the same purchase for the question in the URL', async () => {
		const q = new URLSearchParams({ track: '4500 mm', magnification: '-0.5', na: '0.003', objectHeight: '1 mm', maxParts: '1' });
		const r = await fetch(url(`/build?${q}&/unlock`), {
			method: 'POST',
			headers: { cookie: engineer, origin: url('/').replace(/\/$/, ''), accept: 'application/json', 'x-sveltekit-action': 'true', 'content-type': 'application/x-www-form-urlencoded' },
			body: ''
		});
		expect(r.status).toBe(200);
		const out = await r.json();
		expect(out.type).toBe('success');
		// the action result is serialised with devalue; the SKU of the 1000 mm part is in it
		const api1 = await (await api('POST', '/api/v1/reorder/unlock', { cookie: engineer }, { question })).json();
		expect(out.data).toContain(api1.purchase.sku);

		const bad = await fetch(url('/build?track=0&magnification=-0.5&na=0.003&/unlock'), {
			method: 'POST',
			headers: { cookie: engineer, origin: url('/').replace(/\/$/, ''), accept: 'application/json', 'x-sveltekit-action': 'true', 'content-type': 'application/x-www-form-urlencoded' },
			body: ''
		});
		const badOut = await bad.json();
		expect(badOut.type).toBe('failure');
		expect(badOut.status).toBe(400);
	});

	it('a saved setup short of a part names it on its page, and its own reservations count for it', async () => {
		const solved = await (await api('POST', '/api/v1/solve', { cookie: engineer }, { ...question, trackMm: 450, magnificationTolerance: 0.1, objectNA: 0.01, objectHeightMm: 2 })).json();
		expect(solved.solutions.length).toBeGreaterThan(0);
		const s = solved.solutions[0];
		const choice = { elements: s.elements.map((e: { partId: number; reversed: boolean }) => ({ partId: e.partId, reversed: e.reversed })), objectDistanceMm: s.objectDistanceMm, gapsMm: s.gapsMm, backDistanceMm: s.backDistanceMm };
		const setup = await (await api('POST', '/api/v1/setups', { cookie: engineer }, { name: `Short setup ${Date.now()}`, query: solved.request, choice })).json();
		const partId: number = s.elements[0].partId;
		const page = async () => (await fetch(url(`/build/${setup.id}`), { headers: { cookie: engineer } })).text();

		expect(await page()).not.toContain('Not buildable from stock now');
		const hold = async (quantity: number) => {
			const r = await db.transaction((tx) => res.reserve(tx, { partId, quantity, until: new Date(Date.now() + 86_400_000), userId: who.engineer2.id, note: 'unlock page test' }));
			held.push(r.id);
		};
		// someone else holds all but one unit; the setup's own reservation takes the last one
		const { available } = await totalsOf(db, partId);
		if (available > 1) await hold(available - 1);
		const until = new Date(Date.now() + 86_400_000).toISOString().slice(0, 10);
		const reserved = await api('POST', `/api/v1/setups/${setup.id}/reservations`, { cookie: engineer }, { until: `${until}T23:59:59Z` });
		expect(reserved.status).toBeLessThan(300);
		const own = await db.select({ id: t.reservations.id }).from(t.reservations).where(inArray(t.reservations.setupId, [setup.id]));
		held.push(...own.map((r) => r.id));
		expect((await totalsOf(db, partId)).available).toBe(0);
		// units its own reservation holds are kept for it: still buildable, on its page and on the board
		expect(await page()).not.toContain('Not buildable from stock now');
		const waiting = async () => (await waitingSetups(db)).some((w) => w.setupId === setup.id);
		expect(await waiting()).toBe(false);
		// release it, and someone else takes the last unit
		await db.update(t.reservations).set({ status: 'released' }).where(inArray(t.reservations.id, own.map((r) => r.id)));
		await hold(1);
		const html = await page();
		expect(html).toContain('Not buildable from stock now');
		expect(html).toContain(s.elements[0].sku);
		expect(html).toContain('What purchase would help?');
		expect(html).toContain('Laser caution');
		expect(await waiting()).toBe(true);
	});
});
