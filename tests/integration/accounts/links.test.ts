import { afterAll, afterEach, beforeEach, describe, expect, it } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import { testDb } from '../../support/env';
import { authLinks, auditEvents, users } from '../../../src/lib/server/db/schema';
import { APP, api, clearThrottle, cookieFor, cookieWithCode, lastOutboxId, linkIn, postForm, signInApi, twoStepAdmin, waitForMail } from './helpers';

const { db, pool } = testDb();
afterAll(() => pool.end());
beforeEach(() => clearThrottle(db));
// This file makes failing sign-ins: leave none behind in the shared 127.0.0.1 address bucket.
afterEach(() => clearThrottle(db));

const NEW_PASSWORD = 'violet prism on the third shelf';
let n = 0;
const fresh = () => `invitee-${Date.now()}-${n++}@tarnwell.example`;

/** The admin pages need two-step sign-in: this file's own administrator has it (tests/support/two-step.ts). */
const adminCookie = async () => cookieWithCode(await twoStepAdmin(db, 'links-test'));

async function invite(email: string, role = 'engineer') {
	const admin = await adminCookie();
	const since = await lastOutboxId(db);
	const res = await postForm('/admin/users?/invite', { email, name: 'Invited Person', role }, { cookie: admin });
	expect(res.status).toBe(200);
	const mail = await waitForMail(db, email, since, 'invited');
	return { admin, mail, link: linkIn(mail.textBody) };
}

describe('invitations and password resets by one-time link', () => {
	it('mails an invitation whose link (from ORIGIN) lets the person choose a password once', async () => {
		const email = fresh();
		const { mail, link } = await invite(email);
		expect(link.startsWith(`${APP()}/welcome/`)).toBe(true);
		expect(mail.textBody).toContain('48 hours');
		const token = link.split('/').pop()!;
		// no raw token in the database
		const raw = (await db.execute(sql`select count(*) as n from auth_links where token_hash = ${token}`))[0] as unknown as { n: number }[];
		expect(Number(raw[0].n)).toBe(0);
		const [u] = await db.select().from(users).where(eq(users.email, email));
		expect(u.passwordHash).toBeNull();
		// cannot sign in before choosing a password
		expect((await signInApi(email, NEW_PASSWORD)).res.status).toBe(401);
		// looking at the link does not spend it
		for (let i = 0; i < 2; i++) {
			const page = await fetch(link);
			expect(page.status).toBe(200);
			expect(await page.text()).toContain('Welcome to Glasscrib');
		}
		// a weak password is refused and the link stays usable
		const weak = await postForm(new URL(link).pathname, { password: 'password1234', confirm: 'password1234' });
		expect(weak.status).toBe(400);
		const ok = await postForm(new URL(link).pathname, { password: NEW_PASSWORD, confirm: NEW_PASSWORD });
		expect(ok.status).toBe(303);
		expect(ok.headers.get('location')).toBe('/');
		expect((await signInApi(email, NEW_PASSWORD)).res.status).toBe(200);
		// used once: refused afterwards
		const again = await postForm(new URL(link).pathname, { password: 'another long password', confirm: 'another long password' });
		expect(again.status).toBe(400);
		expect(await again.text()).toContain('already been used');
		expect((await signInApi(email, 'another long password')).res.status).toBe(401);
		const audit = await db.select().from(auditEvents).where(eq(auditEvents.targetId, String(u.id)));
		expect(audit.map((a) => a.action)).toEqual(expect.arrayContaining(['user.invited', 'user.invite-accepted']));
	});

	it('refuses an expired link and a superseded one', async () => {
		const email = fresh();
		const first = await invite(email);
		const [u] = await db.select().from(users).where(eq(users.email, email));
		const since = await lastOutboxId(db);
		const res = await postForm('/admin/users?/resend', { userId: String(u.id) }, { cookie: first.admin });
		expect(res.status).toBe(200);
		const second = linkIn((await waitForMail(db, email, since, 'invited')).textBody);
		const superseded = await postForm(new URL(first.link).pathname, { password: NEW_PASSWORD, confirm: NEW_PASSWORD });
		expect(superseded.status).toBe(400);
		expect(await superseded.text()).toContain('newer link');
		await db.update(authLinks).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(authLinks.userId, u.id));
		const expired = await postForm(new URL(second).pathname, { password: NEW_PASSWORD, confirm: NEW_PASSWORD });
		expect(expired.status).toBe(400);
		expect(await expired.text()).toContain('expired');
		expect((await fetch(second).then((r) => r.text()))).toContain('This link cannot be used');
	});

	it('resets a password from /signin/forgot, with the same reply for unknown addresses, links from ORIGIN not Host', async () => {
		const email = fresh();
		const { link } = await invite(email);
		await postForm(new URL(link).pathname, { password: NEW_PASSWORD, confirm: NEW_PASSWORD });
		const session = (await signInApi(email, NEW_PASSWORD)).cookie!;
		const since = await lastOutboxId(db);
		const known = await fetch(new URL('/signin/forgot', APP()), {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: APP(), 'x-forwarded-host': 'evil.example' },
			body: new URLSearchParams({ email }).toString()
		});
		const unknown = await postForm('/signin/forgot', { email: `no-such-${Date.now()}@tarnwell.example` });
		expect(known.status).toBe(200);
		expect(unknown.status).toBe(200);
		const strip = (html: string) => html.replace(/[a-z0-9-]+@tarnwell\.example/g, 'ADDRESS').replace(/nonce="[^"]*"/g, '');
		const [a, b] = [strip(await known.text()), strip(await unknown.text())];
		expect(a).toContain('a message with a link is on its way');
		expect(a.length).toBe(b.length);
		const mail = await waitForMail(db, email, since, 'new Glasscrib password');
		const reset = linkIn(mail.textBody);
		expect(reset.startsWith(`${APP()}/welcome/`)).toBe(true);
		expect(mail.textBody).not.toContain('evil.example');
		const beforeDone = await lastOutboxId(db);
		const done = await postForm(new URL(reset).pathname, { password: 'a brand new bench password', confirm: 'a brand new bench password' });
		expect(done.status).toBe(303);
		// a password chosen through a reset link is announced like any other change
		await waitForMail(db, email, beforeDone, 'password was changed');
		// a reset ends every session of the user
		expect((await api('GET', '/api/v1/me', { cookie: session })).status).toBe(401);
		expect((await signInApi(email, 'a brand new bench password')).res.status).toBe(200);
		expect((await signInApi(email, NEW_PASSWORD)).res.status).toBe(401);
	});

	it('lists the captured mail for admins only (with two-step sign-in), newest first', async () => {
		const admin = await adminCookie();
		const res = await api('GET', '/api/v1/outbox?limit=5', { cookie: admin });
		expect(res.status).toBe(200);
		const items = (await res.json()).items as { id: number; subject: string; receivedAt: string }[];
		expect(items.length).toBeGreaterThan(0);
		expect(items.length).toBeLessThanOrEqual(5);
		const times = items.map((i) => new Date(i.receivedAt).getTime());
		expect([...times].sort((x, y) => y - x)).toEqual(times);
		const engineer = await cookieFor('engineer@tarnwell.example');
		expect((await api('GET', '/api/v1/outbox', { cookie: engineer })).status).toBe(403);
		expect((await api('GET', '/api/v1/outbox')).status).toBe(401);
		expect((await api('GET', '/api/v1/outbox', { cookie: await cookieFor('admin@tarnwell.example') })).status).toBe(403);
		const page = await fetch(new URL(`/admin/outbox/${items[0].id}`, APP()), { headers: { cookie: admin } });
		expect(page.status).toBe(200);
		expect(await page.text()).toContain(items[0].subject.replace(/&/g, '&amp;'));
	});
});
