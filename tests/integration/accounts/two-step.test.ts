/**
 * Two-step sign-in over HTTP against the built app: set-up on /account, the code at sign-in (form
 * and API), the admin requirement, replay and throttling, turning it off, removal by another admin,
 * and tokens on admin-only endpoints.
 */
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { and, desc, eq, like } from 'drizzle-orm';
import { Secret } from 'otpauth';
import { testDb } from '../../support/env';
import { apiTokens, auditEvents, sessions, signinFailures, users } from '../../../src/lib/server/db/schema';
import { hashPassword } from '../../../src/lib/server/auth/password';
import { codeAt, decryptSecret, stepAt } from '../../../src/lib/server/auth/totp';
import { api, cookieFor, cookieWithCode, lastOutboxId, postForm, sessionCookie, signInApi, twoStepAdmin, url, waitForMail } from './helpers';

const { db, pool } = testDb();
const PASSWORD = 'amber filter in drawer nine';
/** Forgets the wrong codes counted here (only two-step buckets: other files count sign-in failures meanwhile). */
const clearCodeCounts = () => db.delete(signinFailures).where(like(signinFailures.bucket, 'totp:%'));
afterEach(() => clearCodeCounts());
afterAll(async () => {
	await db.update(users).set({ status: 'disabled' }).where(eq(users.email, PLAIN_ADMIN));
	await pool.end();
});

const PLAIN_ADMIN = 'two-step-setup-admin@tarnwell.example';
const PLAIN_ENGINEER = 'two-step-engineer@tarnwell.example';

/** A user of this file with a known password and two-step sign-in off (made again if it exists). */
async function plainUser(email: string, role: 'admin' | 'engineer') {
	const passwordHash = await hashPassword(PASSWORD, process.env.AUTH_PEPPER);
	const off = { totpSecret: null, totpEnabledAt: null, totpLastStep: null, totpPendingSecret: null };
	await db
		.insert(users)
		.values({ email, name: `Two-step ${role}`, role, passwordHash, ...off })
		.onDuplicateKeyUpdate({ set: { role, status: 'active', passwordHash, ...off } });
	const [u] = await db.select().from(users).where(eq(users.email, email));
	return u;
}

/** The secret as the account page shows it for typing in. */
async function shownSecret(cookie: string) {
	const html = await (await fetch(url('/account'), { headers: { cookie } })).text();
	const m = /data-testid="two-step-secret"[^>]*>([A-Z2-7 ]+)</.exec(html);
	if (!m) throw new Error('no secret on the account page');
	return new Uint8Array(Secret.fromBase32(m[1].replace(/ /g, '')).bytes);
}

const problem = async (res: Response) => ((await res.json()) as { error: { code: string; message: string } }).error;

describe('two-step sign-in', () => {
	it('is set up on /account with the shown key, and then opens the admin pages in that session', async () => {
		const u = await plainUser(PLAIN_ADMIN, 'admin');
		const cookie = await cookieFor(PLAIN_ADMIN, PASSWORD);
		// Without it: admin pages answer 403 with a way to set it up; the account page and the rest stay open.
		const denied = await fetch(url('/admin/users'), { headers: { cookie, accept: 'text/html' }, redirect: 'manual' });
		expect(denied.status).toBe(403);
		const deniedHtml = await denied.text();
		expect(deniedHtml).toContain('Two-step sign-in needed');
		expect(deniedHtml).toContain('href="/account#two-step"');
		expect((await problem(await api('GET', '/api/v1/outbox', { cookie }))).code).toBe('second-factor-not-set-up');
		expect((await fetch(url('/account'), { headers: { cookie } })).status).toBe(200);
		expect((await fetch(url('/parts'), { headers: { cookie }, redirect: 'manual' })).status).toBe(200);

		expect((await postForm('/account?/startTwoStep', {}, { cookie })).status).toBe(400); // only the button starts it
		expect((await postForm('/account?/startTwoStep', { confirm: 'yes' }, { cookie })).status).toBe(200);
		const secret = await shownSecret(cookie);
		const [pending] = await db.select().from(users).where(eq(users.id, u.id));
		expect(pending.totpEnabledAt).toBeNull();
		expect(decryptSecret(pending.totpPendingSecret!, u.id, process.env.AUTH_PEPPER)).toEqual(secret);

		const wrong = await postForm('/account?/confirmTwoStep', { code: codeAt(secret, Date.now() + 5 * 60_000) }, { cookie });
		expect(wrong.status).toBe(400);
		expect(await wrong.text()).toContain('That code is not right');
		const bad = await postForm('/account?/confirmTwoStep', { code: '12ab56', extra: 'x' }, { cookie });
		expect(bad.status).toBe(400);

		const since = await lastOutboxId(db);
		const ok = await postForm('/account?/confirmTwoStep', { code: codeAt(secret, Date.now()) }, { cookie });
		expect(ok.status).toBe(200);
		expect(await ok.text()).toContain('Two-step sign-in is on');
		const [on] = await db.select().from(users).where(eq(users.id, u.id));
		expect(on.totpEnabledAt).not.toBeNull();
		expect(on.totpPendingSecret).toBeNull();
		expect(on.totpSecret).not.toContain(Buffer.from(secret).toString('base64url'));
		expect(decryptSecret(on.totpSecret!, u.id, process.env.AUTH_PEPPER)).toEqual(secret);
		expect((await fetch(url('/admin/users'), { headers: { cookie } })).status).toBe(200);
		expect((await api('GET', '/api/v1/outbox?limit=1', { cookie })).status).toBe(200);
		await waitForMail(db, PLAIN_ADMIN, since, 'Two-step sign-in is on');
		const ev = await db.select().from(auditEvents).where(and(eq(auditEvents.action, 'user.two-step-on'), eq(auditEvents.targetId, String(u.id))));
		expect(ev).toHaveLength(1);
		// A second set-up while it is on is refused, keeping the secret.
		expect((await postForm('/account?/startTwoStep', { confirm: 'yes' }, { cookie })).status).toBe(409);
	});

	it('asks for the code after the password (form and API); the half-signed-in session reaches nothing else', async () => {
		const admin = await twoStepAdmin(db, 'two-step-flow');
		// The form: password → the code page, keeping where the person wanted to go.
		const form = await postForm('/signin?redirectTo=%2Fadmin%2Foutbox', { email: admin.email, password: admin.password });
		expect(form.status).toBe(303);
		expect(form.headers.get('location')).toBe('/signin/code?redirectTo=%2Fadmin%2Foutbox');
		const half = sessionCookie(form)!;
		const page = await fetch(url('/signin/code?redirectTo=%2Fadmin%2Foutbox'), { headers: { cookie: half } });
		expect(page.status).toBe(200);
		const pageHtml = await page.text();
		expect(pageHtml).toContain(admin.email);
		expect(pageHtml).not.toContain('nav aria-label="Main"');
		const parts = await fetch(url('/parts'), { headers: { cookie: half }, redirect: 'manual' });
		expect(parts.status).toBe(303);
		expect(parts.headers.get('location')).toBe('/signin/code?redirectTo=%2Fparts');
		const me = await api('GET', '/api/v1/me', { cookie: half });
		expect(me.status).toBe(401);
		expect((await problem(me)).code).toBe('second-factor-required');

		const wrong = await postForm('/signin/code?redirectTo=%2Fadmin%2Foutbox', { code: codeAt(admin.secret, Date.now() - 10 * 60_000) }, { cookie: half });
		expect(wrong.status).toBe(400);
		expect(await wrong.text()).toContain('That code is not right');
		const right = await postForm('/signin/code?redirectTo=%2Fadmin%2Foutbox', { code: await admin.freshCode() }, { cookie: half });
		expect(right.status).toBe(303);
		expect(right.headers.get('location')).toBe('/admin/outbox');
		const full = sessionCookie(right)!;
		expect(full).not.toBe(half); // a new session once the code is given
		expect((await api('GET', '/api/v1/me', { cookie: half })).status).toBe(401);
		expect((await fetch(url('/admin/outbox'), { headers: { cookie: full } })).status).toBe(200);
		const [row] = await db.select().from(sessions).where(eq(sessions.userId, admin.id)).orderBy(desc(sessions.createdAt)).limit(1);
		expect(row.secondFactorAt).not.toBeNull();

		// The API: the same two steps.
		const { res, cookie } = await signInApi(admin.email, admin.password);
		expect((await res.json()).secondFactorRequired).toBe(true);
		expect((await problem(await api('POST', '/api/v1/session/second-factor', { cookie: cookie! }, { code: '12345' }))).code).toBe('invalid-input');
		const ok = await api('POST', '/api/v1/session/second-factor', { cookie: cookie! }, { code: await admin.freshCode() });
		expect(ok.status).toBe(200);
		expect((await api('GET', '/api/v1/outbox?limit=1', { cookie: sessionCookie(ok)! })).status).toBe(200);
		// A session that needs no code says so.
		expect((await api('POST', '/api/v1/session/second-factor', { cookie: sessionCookie(ok)! }, { code: '123456' })).status).toBe(409);
	});

	it('refuses a code that was already used, and codes of earlier steps after it', async () => {
		const admin = await twoStepAdmin(db, 'two-step-replay');
		const now = Date.now();
		const code = await admin.freshCode();
		const first = await signInApi(admin.email, admin.password);
		expect((await api('POST', '/api/v1/session/second-factor', { cookie: first.cookie! }, { code })).status).toBe(200);
		const again = await signInApi(admin.email, admin.password);
		const replay = await api('POST', '/api/v1/session/second-factor', { cookie: again.cookie! }, { code });
		expect(replay.status).toBe(401);
		expect((await problem(replay)).code).toBe('used-code');
		const earlier = codeAt(admin.secret, now - 30_000);
		if (earlier !== code) {
			const old = await api('POST', '/api/v1/session/second-factor', { cookie: again.cookie! }, { code: earlier });
			expect((await problem(old)).code).toMatch(/^(used-code|wrong-code)$/);
		}
		const [row] = await db.select({ last: users.totpLastStep }).from(users).where(eq(users.id, admin.id));
		expect(row.last).toBeGreaterThanOrEqual(stepAt(now));
	});

	it('blocks a user’s code after 5 wrong ones in 15 minutes, even a right one', async () => {
		const admin = await twoStepAdmin(db, 'two-step-throttle');
		const { cookie } = await signInApi(admin.email, admin.password);
		const wrongCode = codeAt(admin.secret, Date.now() + 10 * 60_000);
		for (let i = 0; i < 5; i++) expect((await api('POST', '/api/v1/session/second-factor', { cookie: cookie! }, { code: wrongCode })).status).toBe(401);
		const blocked = await api('POST', '/api/v1/session/second-factor', { cookie: cookie! }, { code: await admin.freshCode() });
		expect(blocked.status).toBe(429);
		expect(Number(blocked.headers.get('retry-after'))).toBeGreaterThan(0);
		const form = await postForm('/signin/code', { code: await admin.freshCode() }, { cookie: cookie! });
		expect(form.status).toBe(429);
		expect(await form.text()).toContain('Too many wrong codes');
	});

	it('is turned off with the password and a current code; another admin can remove it, never their own', async () => {
		const other = await twoStepAdmin(db, 'two-step-clearer');
		const target = await twoStepAdmin(db, 'two-step-target');
		const cookie = await cookieWithCode(target);
		const noPassword = await postForm('/account?/turnOffTwoStep', { password: 'not the password', code: await target.freshCode() }, { cookie });
		expect(noPassword.status).toBe(400);
		expect(await noPassword.text()).toContain('not your current password');
		const noCode = await postForm('/account?/turnOffTwoStep', { password: target.password, code: codeAt(target.secret, Date.now() + 10 * 60_000) }, { cookie });
		expect(noCode.status).toBe(400);
		await clearCodeCounts();
		let since = await lastOutboxId(db);
		const off = await postForm('/account?/turnOffTwoStep', { password: target.password, code: await target.freshCode() }, { cookie });
		expect(off.status).toBe(200);
		await waitForMail(db, target.email, since, 'Two-step sign-in is off');
		const [row] = await db.select().from(users).where(eq(users.id, target.id));
		expect([row.totpSecret, row.totpEnabledAt, row.totpLastStep]).toEqual([null, null, null]);
		expect((await fetch(url('/admin/users'), { headers: { cookie } })).status).toBe(403);

		// Lost phone: another administrator removes it.
		const fresh = await twoStepAdmin(db, 'two-step-target-2');
		const clearer = await cookieWithCode(other);
		since = await lastOutboxId(db);
		const cleared = await postForm('/admin/users?/clearTwoStep', { userId: String(fresh.id) }, { cookie: clearer });
		expect(cleared.status).toBe(200);
		expect(await cleared.text()).toContain('Two-step sign-in removed');
		const mail = await waitForMail(db, fresh.email, since, 'two-step sign-in was removed');
		expect(mail.textBody).toContain('Test admin two-step-clearer');
		const [gone] = await db.select().from(users).where(eq(users.id, fresh.id));
		expect(gone.totpEnabledAt).toBeNull();
		const ev = await db.select().from(auditEvents).where(and(eq(auditEvents.action, 'user.two-step-cleared'), eq(auditEvents.targetId, String(fresh.id))));
		expect(ev.at(-1)?.actorId).toBe(other.id);
		// The person signs in with the password alone again (not half signed in).
		const back = await signInApi(fresh.email, fresh.password);
		expect((await back.res.json()).secondFactorRequired).toBe(false);
		expect((await api('GET', '/api/v1/me', { cookie: back.cookie! })).status).toBe(200);
		// Not one's own, not twice, not without two-step sign-in.
		const own = await postForm('/admin/users?/clearTwoStep', { userId: String(other.id) }, { cookie: clearer });
		expect(own.status).toBe(409);
		expect((await postForm('/admin/users?/clearTwoStep', { userId: String(fresh.id) }, { cookie: clearer })).status).toBe(409);
		const demoAdmin = await cookieFor('admin@tarnwell.example');
		expect((await postForm('/admin/users?/clearTwoStep', { userId: String(other.id) }, { cookie: demoAdmin })).status).toBe(403);
		const [still] = await db.select().from(users).where(eq(users.id, other.id));
		expect(still.totpEnabledAt).not.toBeNull();
	});

	it('keeps engineers’ sign-in as it was, and lets them turn it on too', async () => {
		await plainUser(PLAIN_ENGINEER, 'engineer');
		const { res, cookie } = await signInApi(PLAIN_ENGINEER, PASSWORD);
		expect((await res.json()).secondFactorRequired).toBe(false);
		expect((await api('GET', '/api/v1/me', { cookie: cookie! })).status).toBe(200);
		expect((await postForm('/account?/startTwoStep', { confirm: 'yes' }, { cookie: cookie! })).status).toBe(200);
		const secret = await shownSecret(cookie!);
		expect((await postForm('/account?/confirmTwoStep', { code: codeAt(secret, Date.now()) }, { cookie: cookie! })).status).toBe(200);
		const next = await signInApi(PLAIN_ENGINEER, PASSWORD);
		expect((await next.res.json()).secondFactorRequired).toBe(true);
		expect((await api('GET', '/api/v1/parts?pageSize=1', { cookie: next.cookie! })).status).toBe(401);
		// A role that is not admin still gets 403 (not the two-step page) on admin routes.
		expect((await problem(await api('GET', '/api/v1/outbox', { cookie: cookie! }))).code).toBe('forbidden');
		await db.update(users).set({ status: 'disabled' }).where(eq(users.email, PLAIN_ENGINEER));
	});

	it('lets a token reach admin-only endpoints only when its owner has two-step sign-in on', async () => {
		const newToken = async (cookie: string, password: string) => {
			const res = await api('POST', '/api/v1/tokens', { cookie }, { name: 'two-step test', expiresInDays: 1, password });
			expect(res.status).toBe(201);
			return (await res.json()) as { id: number; token: string };
		};
		const demo = await newToken(await cookieFor('admin@tarnwell.example'), process.env.DEMO_PASSWORD || 'tarnwell-bench-2026');
		const admin = await twoStepAdmin(db, 'two-step-token');
		const withFactor = await newToken(await cookieWithCode(admin), admin.password);
		try {
			const refused = await api('GET', '/api/v1/outbox?limit=1', { token: demo.token });
			expect(refused.status).toBe(403);
			expect((await problem(refused)).code).toBe('second-factor-not-set-up');
			expect((await api('GET', '/api/v1/outbox?limit=1', { token: withFactor.token })).status).toBe(200);
			// Revoking someone else's token is an admin power too: the demo admin's token gets 404 for it.
			expect((await api('DELETE', `/api/v1/tokens/${withFactor.id}`, { token: demo.token })).status).toBe(404);
		} finally {
			await db.update(apiTokens).set({ revokedAt: new Date() }).where(eq(apiTokens.id, demo.id));
			await db.update(apiTokens).set({ revokedAt: new Date() }).where(eq(apiTokens.id, withFactor.id));
		}
	});
});
