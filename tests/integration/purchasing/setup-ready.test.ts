/**
 * "Your saved setup can be built now": a saved setup short of a part mails its owner once when
 * the part is back in stock, not again while it stays buildable, again after it was short once
 * more, and never once its parts were issued to it (built). The app's own check (after write
 * requests of other test files) may run at the same moment as this file's; the unique open wait
 * makes exactly one of them mail, so the test counts messages in the outbox, not its own sends.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray, isNotNull } from 'drizzle-orm';
import { testDb, testEnv } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as ops from '../../../src/lib/server/stock/operations';
import * as res from '../../../src/lib/server/stock/reservations';
import { checkSetupsReady, readyMessage } from '../../../src/lib/server/purchasing/setup-ready';
import { lastOutboxId, newPart, outboxMentioning, people, sleep, smtpMailer, waitForMentions } from './helpers';

const { db, pool } = testDb();
const tag = `SR${Date.now().toString(36).toUpperCase()}`;
const send = smtpMailer();
const origin = testEnv('APP_URL');
let who: Awaited<ReturnType<typeof people>>;
let partId = 0;
let setupId = 0;
const setupName = `Relay for ${tag}`;

beforeAll(async () => {
	who = await people(db);
	partId = await newPart(db, who.stockroom.id, `${tag}-P`, { reorderPoint: 0 });
	[{ id: setupId }] = await db
		.insert(t.setups)
		.values({ name: setupName, userId: who.engineer2.id, query: {}, solution: { elements: [{ partId, sku: `${tag}-P`, reversed: false }] } })
		.$returningId();
});
afterAll(async () => {
	await db.delete(t.reservations).where(eq(t.reservations.setupId, setupId));
	await db.delete(t.setups).where(eq(t.setups.id, setupId)); // its waits go with it
	await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, [partId]));
	await pool.end();
});

const openWaits = () => db.select().from(t.setupWaits).where(and(eq(t.setupWaits.setupId, setupId), isNotNull(t.setupWaits.openSetupId)));
const check = () => checkSetupsReady(db, { send, origin });

describe('saved setups waiting for parts', () => {
	it('mails the owner once when a short setup can be built again, and not once it was built', async () => {
		const since = await lastOutboxId(db);
		const loc = who.locations[0].id;

		// Short of its one part: a wait opens, nobody is mailed.
		await check();
		expect(await openWaits()).toHaveLength(1);

		// The part arrives: buildable, one mail to the owner, the wait closes.
		await ops.receive(db, { partId, quantity: 1, locationId: loc }, { id: who.stockroom.id });
		await check();
		const first = await waitForMentions(db, setupName, 1, since);
		expect(first[0].toAddresses).toContain('engineer2@tarnwell.example');
		expect(first[0].subject).toBe(`Your setup “${setupName}” can be built from stock now`);
		expect(first[0].textBody).toContain(`/build/${setupId}`);
		expect(first[0].textBody).toMatch(/laser safety officer/);
		expect(await openWaits()).toHaveLength(0);

		// Still buildable: checks, also several at once, send nothing more.
		await Promise.all([check(), check(), check()]);
		await sleep(600);
		expect(await outboxMentioning(db, setupName, since)).toHaveLength(1);

		// Short again (the unit went elsewhere), then back: one more mail.
		await ops.issue(db, { partId, quantity: 1, locationId: loc, issuedTo: 'bench 2' }, { id: who.engineer.id });
		await check();
		expect(await openWaits()).toHaveLength(1);
		await ops.receive(db, { partId, quantity: 1, locationId: loc }, { id: who.stockroom.id });
		await check();
		await waitForMentions(db, setupName, 2, since);

		// Built: the owner reserves the unit for the setup and takes it. Short now, but nothing to wait for.
		await db.transaction((tx) => res.reserve(tx, { partId, quantity: 1, until: new Date(Date.now() + 86_400_000), setupId, userId: who.engineer2.id }));
		await ops.issue(db, { partId, quantity: 1, locationId: loc, issuedTo: 'bench 7' }, { id: who.engineer2.id });
		const [r] = await db.select().from(t.reservations).where(eq(t.reservations.setupId, setupId));
		expect(r.status).toBe('fulfilled');
		await check();
		expect(await openWaits()).toHaveLength(0);
		await ops.receive(db, { partId, quantity: 1, locationId: loc }, { id: who.stockroom.id });
		await check();
		await sleep(600);
		expect(await outboxMentioning(db, setupName, since)).toHaveLength(2);
	});

	it('words the message with the setup link and the laser caution', () => {
		const m = readyMessage({ id: 42, name: 'Camera relay' }, { name: 'Ada Tester', email: 'ada@tarnwell.example' }, 'https://glasscrib.example.org');
		expect(m.to).toBe('ada@tarnwell.example');
		expect(m.text).toContain('https://glasscrib.example.org/build/42');
		expect(m.text).toContain('Hello Ada Tester,');
	});
});
