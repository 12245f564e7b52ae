import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray, isNotNull } from 'drizzle-orm';
import { testDb, testEnv } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as ops from '../../../src/lib/server/stock/operations';
import * as res from '../../../src/lib/server/stock/reservations';
import { checkFlags, flaggedParts } from '../../../src/lib/server/purchasing/flags';
import { cookieFor, api } from '../accounts/helpers';
import { lastOutboxId, newPart, outboxMentioning, people, sleep, smtpMailer, waitForMentions } from './helpers';

const { db, pool } = testDb();
// separate pools so that parallel checks really run on separate connections
const others = await Promise.all([1, 2, 3, 4].map(async () => (await import('../../../src/lib/server/db/client')).createDb(testEnv('DATABASE_URL'), 2)));
const tag = `DG${Date.now().toString(36).toUpperCase()}`;
const created: number[] = [];
let who: Awaited<ReturnType<typeof people>>;
const send = smtpMailer();
const origin = testEnv('APP_URL');

beforeAll(async () => {
	who = await people(db);
});
afterAll(async () => {
	if (created.length) await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, created));
	await pool.end();
	for (const o of others) await o.pool.end();
});

const openNotices = (partId: number) =>
	db.select().from(t.flagNotices).where(and(eq(t.flagNotices.partId, partId), isNotNull(t.flagNotices.openPartId)));

describe('purchasers’ digest', () => {
	it('reports a part once when it becomes flagged, not again until it has recovered', async () => {
		const sku = `${tag}-A`;
		const partId = await newPart(db, who.stockroom.id, sku, { reorderPoint: 2 });
		created.push(partId);
		const loc = who.locations[0].id;
		const since = await lastOutboxId(db);

		await ops.receive(db, { partId, quantity: 3, locationId: loc }, { id: who.stockroom.id });
		await checkFlags(db, { send, origin });
		expect((await flaggedParts(db)).some((f) => f.partId === partId)).toBe(false); // available 3 > reorder point 2
		expect(await openNotices(partId)).toHaveLength(0);

		await ops.issue(db, { partId, quantity: 1, locationId: loc, issuedTo: 'bench 4' }, { id: who.engineer.id }); // available 2 = reorder point
		await checkFlags(db, { send, origin });
		const first = await waitForMentions(db, sku, 1, since);
		expect(first[0].toAddresses).toContain('purchaser@tarnwell.example');
		expect(first[0].subject).toMatch(/^Reorder: /);
		expect(await openNotices(partId)).toHaveLength(1);

		// still flagged (and lower): further checks, also several at once on separate connections, send nothing new
		await ops.issue(db, { partId, quantity: 1, locationId: loc, issuedTo: 'bench 4' }, { id: who.engineer.id });
		await checkFlags(db, { send, origin });
		await Promise.all(others.map((o) => checkFlags(o.db, { send, origin })));
		await sleep(800);
		expect(await outboxMentioning(db, sku, since)).toHaveLength(1);
		expect(await openNotices(partId)).toHaveLength(1);

		// recovers: the notice is cleared, nothing is mailed
		await ops.receive(db, { partId, quantity: 5, locationId: loc }, { id: who.stockroom.id }); // available 6
		const cleared = await checkFlags(db, { send, origin });
		expect(cleared.cleared).toContain(partId);
		expect(await openNotices(partId)).toHaveLength(0);

		// flagged again: reported again, once
		await ops.issue(db, { partId, quantity: 4, locationId: loc, issuedTo: 'bench 4' }, { id: who.engineer.id }); // available 2
		await Promise.all([checkFlags(db, { send, origin }), ...others.map((o) => checkFlags(o.db, { send, origin }))]);
		await waitForMentions(db, sku, 2, since);
		await sleep(800);
		expect(await outboxMentioning(db, sku, since)).toHaveLength(2);
		const history = await db.select().from(t.flagNotices).where(eq(t.flagNotices.partId, partId));
		expect(history).toHaveLength(2);
		expect(history.filter((h) => h.clearedAt)).toHaveLength(1);
	});

	it('lists all newly flagged parts in one message, and flags reservations beyond on hand', async () => {
		const skuB = `${tag}-B`;
		const skuC = `${tag}-C`;
		const b = await newPart(db, who.stockroom.id, skuB, { reorderPoint: 1 });
		const c = await newPart(db, who.stockroom.id, skuC, { reorderPoint: 0 });
		created.push(b, c);
		const loc = who.locations[0].id;
		await ops.receive(db, { partId: b, quantity: 1, locationId: loc }, { id: who.stockroom.id }); // available 1 = point: flagged
		await ops.receive(db, { partId: c, quantity: 2, locationId: loc }, { id: who.stockroom.id }); // point 0: not flagged
		await db.transaction((tx) => res.reserve(tx, { partId: c, quantity: 2, until: new Date(Date.now() + 86_400_000), userId: who.engineer.id }));
		await ops.scrap(db, { partId: c, quantity: 1, locationId: loc, condition: 'usable', reason: 'chipped' }, { id: who.stockroom.id }); // reserved 2 > on hand 1
		const since = await lastOutboxId(db);
		const result = await checkFlags(db, { send, origin });
		const reported = result.reported.filter((r) => r.sku.startsWith(tag)).map((r) => [r.sku, r.reason]);
		expect(reported).toEqual([
			[skuB, 'reorder-point'],
			[skuC, 'over-reserved']
		]);
		const msgs = await waitForMentions(db, skuB, 1, since);
		expect(msgs).toHaveLength(1);
		expect(msgs[0].textBody).toContain(skuC);
		expect(msgs[0].textBody).toContain('reserved beyond what is on hand');
	});

	it('the app checks after a write through the API and mails the digest', async () => {
		const sku = `${tag}-D`;
		const partId = await newPart(db, who.stockroom.id, sku, { reorderPoint: 1 });
		created.push(partId);
		const loc = who.locations[1].id;
		await ops.receive(db, { partId, quantity: 2, locationId: loc }, { id: who.stockroom.id });
		await checkFlags(db, { send, origin }); // not flagged yet
		const since = await lastOutboxId(db);
		const cookie = await cookieFor('engineer@tarnwell.example');
		const r = await api('POST', '/api/v1/stock/issue', { cookie }, { partId, quantity: 1, locationId: loc, issuedTo: 'bench 1' });
		expect(r.status).toBe(201);
		const msgs = await waitForMentions(db, sku, 1, since);
		expect(msgs[0].toAddresses).toContain('purchaser@tarnwell.example');
	});
});
