/**
 * A setup's own active reservations count as available to it wherever "unlocks" is computed (issue 16):
 * a saved setup whose two parts it has fully reserved is buildable, so the reorder board names no part
 * as unlocking it and suggests nothing for it; the setup's unlock answer says it is buildable. Units held
 * by someone else do not count, so the same setup then shows up as unlocked by that part.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, inArray } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as res from '../../../src/lib/server/stock/reservations';
import * as ops from '../../../src/lib/server/stock/operations';
import { boardRows, waitingSetups } from '../../../src/lib/server/purchasing/board';
import { setupShortfall } from '../../../src/lib/server/purchasing/unlock-search';
import { getSetup } from '../../../src/lib/server/solver/setups';
import { api, cookieFor } from '../accounts/helpers';
import { newPart, people } from './helpers';

const { db, pool } = testDb();
const tag = `RS${Date.now().toString(36).toUpperCase()}`;
let who: Awaited<ReturnType<typeof people>>;
let purchaser = '';
let a = 0;
let b = 0;
let setupId = 0;
const until = () => new Date(Date.now() + 7 * 86_400_000);

beforeAll(async () => {
	who = await people(db);
	purchaser = await cookieFor('purchaser@tarnwell.example');
	// reorder point 0: not kept on the shelf, so only an unlock (or over-reservation) puts them on the board
	a = await newPart(db, who.stockroom.id, `${tag}-A`, { reorderPoint: 0, supplierPartNumber: `${tag}-A` });
	b = await newPart(db, who.stockroom.id, `${tag}-B`, { reorderPoint: 0, supplierPartNumber: `${tag}-B` });
	for (const partId of [a, b]) await ops.receive(db, { partId, quantity: 1, locationId: who.locations[0].id }, { id: who.stockroom.id });
	[{ id: setupId }] = await db
		.insert(t.setups)
		.values({ name: `Fully reserved ${tag}`, userId: who.engineer.id, query: {}, solution: { elements: [{ partId: a, sku: `${tag}-A` }, { partId: b, sku: `${tag}-B` }] } })
		.$returningId();
});

afterAll(async () => {
	await db.update(t.reservations).set({ status: 'released' }).where(inArray(t.reservations.partId, [a, b]));
	await db.delete(t.setupWaits).where(eq(t.setupWaits.setupId, setupId));
	await db.delete(t.setups).where(eq(t.setups.id, setupId));
	await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, [a, b]));
	await pool.end();
});

const rowOf = async (partId: number) => (await boardRows(db)).find((r) => r.partId === partId);

describe('a fully reserved setup', () => {
	it('unlocks nothing on the board, is not waiting, and its unlock answer says buildable', async () => {
		await db.transaction(async (tx) => {
			for (const partId of [a, b]) await res.reserve(tx, { partId, quantity: 1, until: until(), setupId, userId: who.engineer.id });
		});
		// available is 0 for both parts, but the units are the setup's own
		expect(await rowOf(a)).toBeUndefined();
		expect(await rowOf(b)).toBeUndefined();
		expect((await waitingSetups(db)).map((w) => w.setupId)).not.toContain(setupId);
		const board = await (await api('GET', '/api/v1/reorder', { cookie: purchaser })).json();
		const mine = (board.items as { partId: number; unlocks: { setupId: number }[] }[]).filter((r) => r.partId === a || r.partId === b);
		expect(mine).toEqual([]);
		// the setup's own page and unlock answer: nothing short (its saved question is empty here, so only
		// its own figures are checked, not the solver search)
		expect(await setupShortfall(db, await getSetup(db, setupId))).toEqual([]);
	});

	it('is unlocked by a part whose unit someone else holds instead', async () => {
		const mine = await db.select().from(t.reservations).where(eq(t.reservations.setupId, setupId));
		await db.update(t.reservations).set({ status: 'released' }).where(eq(t.reservations.id, mine.find((r) => r.partId === a)!.id));
		await db.transaction((tx) => res.reserve(tx, { partId: a, quantity: 1, until: until(), userId: who.engineer2.id, note: tag }));
		const row = await rowOf(a);
		expect(row?.unlocks.map((u) => u.setupId)).toContain(setupId);
		expect(row?.suggestedQuantity).toBeGreaterThanOrEqual(1);
		expect(await rowOf(b)).toBeUndefined(); // b is still held for the setup
		expect((await waitingSetups(db)).find((w) => w.setupId === setupId)?.short.map((s) => s.partId)).toEqual([a]);
		expect((await setupShortfall(db, await getSetup(db, setupId))).map((s) => s.partId)).toEqual([a]);
	});
});
