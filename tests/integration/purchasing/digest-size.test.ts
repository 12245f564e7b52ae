/**
 * A digest too big for the mail server is summarised, and a permanent refusal is not retried at every
 * check for ever (seen: 2,938 flagged parts gave a mail over 64 KB, refused and retried 29 times).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, inArray, isNotNull } from 'drizzle-orm';
import { testDb, testEnv } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { checkFlags, type Mailer } from '../../../src/lib/server/purchasing/flags';
import { newPart, people } from './helpers';

const { db, pool } = testDb();
const tag = `DS${Date.now().toString(36).toUpperCase()}`;
const created: number[] = [];
const origin = testEnv('APP_URL');

beforeAll(async () => {
	const who = await people(db);
	// No stock and a reorder point of 2: each is flagged at the next check.
	for (let i = 0; i < 40; i++) created.push(await newPart(db, who.stockroom.id, `${tag}-${String(i).padStart(2, '0')}`, { reorderPoint: 2 }));
});
afterAll(async () => {
	await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, created));
	await checkFlags(db, { send: async () => undefined, origin }); // clears their notices
	await pool.end();
});

const openFor = async () =>
	(await db.select({ partId: t.flagNotices.partId }).from(t.flagNotices).where(and(inArray(t.flagNotices.partId, created), isNotNull(t.flagNotices.openPartId)))).length;

describe('digest size', () => {
	it('summarises a digest over the size limit, and does not retry one the server refuses for good', async () => {
		const sent: { subject: string; text: string }[] = [];
		let tries = 0;
		// A mail server with a small size limit: it refuses anything over 1,500 bytes with 552, as SMTP servers do.
		const smallServer: Mailer = async (m) => {
			tries++;
			if (Buffer.byteLength(m.text, 'utf8') > 1500) throw Object.assign(new Error('552 5.3.4 Message size exceeds fixed limit'), { responseCode: 552 });
			sent.push(m);
		};
		const first = await checkFlags(db, { send: smallServer, origin, maxBytes: 1400 });
		expect(first.reported.filter((p) => created.includes(p.partId))).toHaveLength(40);
		expect(sent).toHaveLength(1);
		expect(Buffer.byteLength(sent[0].text, 'utf8')).toBeLessThanOrEqual(1400);
		expect(sent[0].text).toMatch(/and \d+ more parts: the whole list is on the reorder board, http:\/\/\S+\/reorder/);
		expect(await openFor()).toBe(40);

		// Recover them, then flag them again and let the server refuse the digest for good (as an over-size one would be).
		await db.update(t.parts).set({ reorderPoint: 0 }).where(inArray(t.parts.id, created));
		await checkFlags(db, { send: smallServer, origin });
		expect(await openFor()).toBe(0);
		await db.update(t.parts).set({ reorderPoint: 2 }).where(inArray(t.parts.id, created));
		tries = 0;
		await expect(checkFlags(db, { send: smallServer, origin, maxBytes: 10 * 1024 * 1024 })).resolves.toMatchObject({ recipients: expect.any(Array) });
		expect(tries).toBe(1);
		// The notices stand: later checks do not send the refused digest again.
		expect(await openFor()).toBe(40);
		await checkFlags(db, { send: smallServer, origin, maxBytes: 10 * 1024 * 1024 });
		await checkFlags(db, { send: smallServer, origin, maxBytes: 10 * 1024 * 1024 });
		expect(tries).toBe(1);

		// A refusal worth retrying (4xx, or no connection) still rolls back, so the next check tries again.
		await db.update(t.parts).set({ reorderPoint: 0 }).where(inArray(t.parts.id, created));
		await checkFlags(db, { send: smallServer, origin });
		await db.update(t.parts).set({ reorderPoint: 2 }).where(inArray(t.parts.id, created));
		const busy: Mailer = async () => {
			throw Object.assign(new Error('451 4.3.0 try again later'), { responseCode: 451 });
		};
		await expect(checkFlags(db, { send: busy, origin })).rejects.toThrow(/451/);
		expect(await openFor()).toBe(0);
	});
});
