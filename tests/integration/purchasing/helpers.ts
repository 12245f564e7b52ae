/** Shared set-up of the purchasing tests: users, locations, test parts, a real SMTP mailer, outbox reads. */
import nodemailer from 'nodemailer';
import { and, asc, desc, gt, like } from 'drizzle-orm';
import { testEnv } from '../../support/env';
import type { Db } from '../../../src/lib/server/db/client';
import * as t from '../../../src/lib/server/db/schema';
import * as parts from '../../../src/lib/server/catalogue/parts';
import type { Mailer } from '../../../src/lib/server/purchasing/flags';

export async function people(db: Db) {
	const us = await db.select({ id: t.users.id, role: t.users.role, email: t.users.email }).from(t.users).orderBy(asc(t.users.id));
	const by = (email: string) => us.find((u) => u.email === email)!;
	const locs = (await db.select().from(t.locations).orderBy(asc(t.locations.code))).filter((l) => !l.archivedAt);
	return {
		stockroom: by('stockroom@tarnwell.example'),
		engineer: by('engineer@tarnwell.example'),
		engineer2: by('engineer2@tarnwell.example'),
		purchaser: by('purchaser@tarnwell.example'),
		admin: by('admin@tarnwell.example'),
		locations: locs
	};
}

/** A mailer that really sends through the test stack's SMTP catcher (so messages land in the outbox). */
export function smtpMailer(): Mailer {
	const transport = nodemailer.createTransport({ url: testEnv('SMTP_URL'), secure: false, ignoreTLS: true });
	return async (m) => {
		await transport.sendMail({ from: 'Glasscrib test <glasscrib@localhost>', ...m });
	};
}

/** Creates a datasheet-only test part (no surfaces) with the given reorder point. */
export async function newPart(db: Db, actorId: number, sku: string, over: Record<string, unknown> = {}) {
	const { id } = await parts.createPart(
		db,
		{ sku, name: `Purchasing test ${sku}`, kind: 'other', diameterMm: 25, eflMm: 100, reorderPoint: 2, reorderQuantity: 3, supplier: 'Quillmere Glassworks', unitPrice: 42, leadTimeDays: 12, ...over },
		{ id: actorId }
	);
	return id;
}

/** Outbox messages whose text mentions `needle`, newest first. */
export async function outboxMentioning(db: Db, needle: string, sinceId = 0) {
	return db
		.select()
		.from(t.outboxMessages)
		.where(and(like(t.outboxMessages.textBody, `%${needle}%`), gt(t.outboxMessages.id, sinceId)))
		.orderBy(desc(t.outboxMessages.id));
}

/** Waits until `count` messages mention `needle` (the catcher stores them asynchronously). */
export async function waitForMentions(db: Db, needle: string, count: number, sinceId = 0) {
	for (let i = 0; i < 80; i++) {
		const rows = await outboxMentioning(db, needle, sinceId);
		if (rows.length >= count) return rows;
		await new Promise((r) => setTimeout(r, 100));
	}
	throw new Error(`expected ${count} message(s) mentioning ${needle}, found ${(await outboxMentioning(db, needle, sinceId)).length}`);
}

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export async function lastOutboxId(db: Db) {
	const [row] = await db.select({ id: t.outboxMessages.id }).from(t.outboxMessages).orderBy(desc(t.outboxMessages.id)).limit(1);
	return row?.id ?? 0;
}
