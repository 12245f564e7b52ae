/**
 * Usable, quarantine and damaged units read the same everywhere (issue 16): the part page, the
 * overview's quarantine list and the reorder board all say "3 usable · 2 in quarantine", only usable
 * units count as on hand, and the board shows the arithmetic behind its suggestion.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as ops from '../../../src/lib/server/stock/operations';
import { api, cookieFor, url } from '../accounts/helpers';
import { newPart, people } from './helpers';

const { db, pool } = testDb();
const tag = `QC${Date.now().toString(36).toUpperCase()}`;
let partId = 0;
let who: Awaited<ReturnType<typeof people>>;

beforeAll(async () => {
	who = await people(db);
	partId = await newPart(db, who.stockroom.id, `${tag}-Q`, { reorderPoint: 4, reorderQuantity: 2, leadTimeDays: 10 });
	const loc = who.locations[0].id;
	const qc = who.locations.find((l) => l.code === 'QC-SHELF')!.id;
	await ops.receive(db, { partId, quantity: 3, locationId: loc }, { id: who.stockroom.id });
	await ops.receive(db, { partId, quantity: 2, locationId: qc, condition: 'quarantine' }, { id: who.stockroom.id });
	await ops.receive(db, { partId, quantity: 1, locationId: qc, condition: 'damaged' }, { id: who.stockroom.id });
});
afterAll(async () => {
	// Archive only: deleting its stock rows would leave their ledger rows behind (ledger ≠ stock for the next test).
	await db.update(t.parts).set({ archivedAt: new Date() }).where(eq(t.parts.id, partId));
	await pool.end();
});

const text = (html: string) => html.replace(/<!--.*?-->/g, '').replace(/<[^>]+>/g, ' ').replace(/\s+/g, ' ');

describe('stock by condition', () => {
	it('the part page counts usable units as on hand and names the others', async () => {
		const cookie = await cookieFor('stockroom@tarnwell.example');
		const page = text(await (await fetch(url(`/parts/${partId}`), { headers: { cookie } })).text());
		expect(page).toContain('3 usable · 2 in quarantine · 1 damaged · 3 available');
		expect(page).not.toMatch(/\d+ on hand/);
	});

	it('the overview lists the quarantined units with the usable ones beside them', async () => {
		const cookie = await cookieFor('stockroom@tarnwell.example');
		const page = text(await (await fetch(url('/'), { headers: { cookie } })).text());
		expect(page).toMatch(new RegExp(`${tag}-Q .*? 3 usable · 2 in quarantine`));
	});

	it('the board counts only usable units and shows its arithmetic', async () => {
		const cookie = await cookieFor('purchaser@tarnwell.example');
		const board = await (await api('GET', '/api/v1/reorder', { cookie })).json();
		const row = board.items.find((r: { partId: number }) => r.partId === partId);
		expect(row).toMatchObject({ onHand: 3, quarantine: 2, damaged: 1, available: 3, flag: 'reorder-point', suggestedQuantity: 2 });
		expect(row.suggestion).toBe(
			'reorder point 4 + 1 − (3 usable − 0 reserved) + 0 used in the lead time = 2; − 0 on order = 2 (2 in quarantine and 1 damaged not counted)'
		);
		const html = text(await (await fetch(url('/reorder'), { headers: { cookie } })).text());
		expect(html).toContain('2 in quarantine · 1 damaged');
		expect(html).toContain(row.suggestion);
	});
});
