import { afterAll, afterEach, beforeEach, describe, expect, it } from 'vitest';
import { eq, like, sql } from 'drizzle-orm';
import { testDb } from '../../support/env';
import { apiTokens, auditEvents, sessions, users } from '../../../src/lib/server/db/schema';
import { api, clearThrottle, cookieFor, cookieWithCode, DEMO_PASSWORD, lastOutboxId, twoStepAdmin, waitForMail } from './helpers';

const { db, pool } = testDb();
afterAll(async () => {
	await db.update(users).set({ status: 'active' }).where(eq(users.email, 'engineer2@tarnwell.example'));
	await pool.end();
});
beforeEach(() => clearThrottle(db));
// This file makes failing sign-ins: leave none behind in the shared 127.0.0.1 address bucket.
afterEach(() => clearThrottle(db));

async function newToken(email: string, name: string, extra: Record<string, unknown> = {}) {
	const cookie = await cookieFor(email);
	const res = await api('POST', '/api/v1/tokens', { cookie }, { name, password: DEMO_PASSWORD(), ...extra });
	expect(res.status).toBe(201);
	return { cookie, ...((await res.json()) as { id: number; token: string; prefix: string }) };
}

describe('personal API tokens', () => {
	it('creates a random gc_ token shown once, stored only as its SHA-256, usable as Bearer, with last-used time', async () => {
		const since = await lastOutboxId(db);
		const { id, token, prefix } = await newToken('engineer@tarnwell.example', 'bench script');
		expect(token).toMatch(/^gc_[A-Za-z0-9_-]{43}$/); // 32 random bytes = 256 bits
		expect(token.startsWith(prefix)).toBe(true);
		const [row] = await db.select().from(apiTokens).where(eq(apiTokens.id, id));
		expect(row.tokenHash).toMatch(/^[0-9a-f]{64}$/);
		expect(row.tokenHash).not.toContain(token.slice(3, 20));
		const [{ n }] = (await db.execute(sql`select count(*) as n from api_tokens where token_hash = ${token} or prefix = ${token}`))[0] as unknown as { n: number }[];
		expect(Number(n)).toBe(0);
		expect(row.lastUsedAt).toBeNull();
		const me = await api('GET', '/api/v1/me', { token });
		expect(me.status).toBe(200);
		expect(await me.json()).toMatchObject({ user: { email: 'engineer@tarnwell.example' }, authVia: 'token' });
		const [after] = await db.select().from(apiTokens).where(eq(apiTokens.id, id));
		expect(after.lastUsedAt).not.toBeNull();
		const listed = await api('GET', '/api/v1/tokens', { token });
		const items = (await listed.json()).items as { id: number; prefix: string; token?: string }[];
		expect(items.find((t) => t.id === id)).toMatchObject({ prefix, state: 'active' });
		expect(JSON.stringify(items)).not.toContain(token);
		const mail = await waitForMail(db, 'engineer@tarnwell.example', since, 'API token');
		expect(mail.textBody).toContain('bench script');
		const audit = await db.select().from(auditEvents).where(eq(auditEvents.action, 'token.created'));
		expect(audit.some((a) => a.targetId === String(id))).toBe(true);
		expect(JSON.stringify(audit)).not.toContain(token);
	});

	it('re-asks the current password (403 without it or with a wrong one) and refuses token-minting by a token', async () => {
		const cookie = await cookieFor('engineer@tarnwell.example');
		expect((await api('POST', '/api/v1/tokens', { cookie }, { name: 'x' })).status).toBe(403);
		expect((await api('POST', '/api/v1/tokens', { cookie }, { name: 'x', password: 'wrong-password-here' })).status).toBe(403);
		expect((await api('POST', '/api/v1/tokens', { cookie }, { name: '', password: DEMO_PASSWORD() })).status).toBe(400);
		const { token } = await newToken('engineer@tarnwell.example', 'minter');
		const minted = await api('POST', '/api/v1/tokens', { token }, { name: 'child', password: DEMO_PASSWORD() });
		expect(minted.status).toBe(403);
		expect((await minted.json()).error.code).toBe('session-required');
	});

	it('stops working at once when revoked; someone else’s token answers 404', async () => {
		const mine = await newToken('engineer@tarnwell.example', 'to revoke');
		const other = await cookieFor('purchaser@tarnwell.example');
		expect((await api('DELETE', `/api/v1/tokens/${mine.id}`, { cookie: other })).status).toBe(404);
		expect((await api('GET', '/api/v1/me', { token: mine.token })).status).toBe(200);
		expect((await api('DELETE', `/api/v1/tokens/${mine.id}`, { cookie: mine.cookie })).status).toBe(204);
		const after = await api('GET', '/api/v1/me', { token: mine.token });
		expect(after.status).toBe(401);
		expect((await after.json()).error.code).toBe('invalid-token');
		expect((await api('DELETE', `/api/v1/tokens/${mine.id}`, { cookie: mine.cookie })).status).toBe(404);
	});

	it('refuses an expired token and a token in the query string', async () => {
		const t = await newToken('stockroom@tarnwell.example', 'short-lived', { expiresInDays: 1 });
		expect((await api('GET', '/api/v1/me', { token: t.token })).status).toBe(200);
		await db.update(apiTokens).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(apiTokens.id, t.id));
		expect((await api('GET', '/api/v1/me', { token: t.token })).status).toBe(401);
		const q = await api('GET', `/api/v1/me?token=${encodeURIComponent(t.token)}`);
		expect(q.status).toBe(401);
	});

	it('makes a deactivated user’s sessions and tokens stop working at once', async () => {
		const victim = await newToken('engineer2@tarnwell.example', 'before deactivation');
		const admin = await cookieWithCode(await twoStepAdmin(db, 'tokens-test'));
		const [u] = await db.select().from(users).where(eq(users.email, 'engineer2@tarnwell.example'));
		const res = await fetch(new URL('/admin/users?/deactivate', process.env.APP_URL).toString(), {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: process.env.APP_URL!, cookie: admin },
			body: `userId=${u.id}`,
			redirect: 'manual'
		});
		expect(res.status).toBe(200);
		expect(await db.select().from(sessions).where(eq(sessions.userId, u.id))).toHaveLength(0);
		expect((await api('GET', '/api/v1/me', { cookie: victim.cookie })).status).toBe(401);
		expect((await api('GET', '/api/v1/me', { token: victim.token })).status).toBe(401);
		// cannot sign in while deactivated
		const again = await api('POST', '/api/v1/session', {}, { email: 'engineer2@tarnwell.example', password: DEMO_PASSWORD() });
		expect(again.status).toBe(401);
		await fetch(new URL('/admin/users?/reactivate', process.env.APP_URL).toString(), {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: process.env.APP_URL!, cookie: admin },
			body: `userId=${u.id}`
		});
		// Reactivation gives the account back, not its old tokens: they were revoked with the deactivation.
		expect((await api('GET', '/api/v1/me', { token: victim.token })).status).toBe(401);
		const [row] = await db.select().from(apiTokens).where(eq(apiTokens.id, victim.id));
		expect(row.revokedAt).not.toBeNull();
		expect((await cookieFor('engineer2@tarnwell.example')).length).toBeGreaterThan(0);
		const events = await db.select().from(auditEvents).where(like(auditEvents.action, 'user.%activated'));
		expect(events.filter((e) => e.targetId === String(u.id)).map((e) => e.action)).toEqual(expect.arrayContaining(['user.deactivated', 'user.reactivated']));
	});

	it('revokes, at reactivation, tokens of an account deactivated while tokens were not yet revoked with it', async () => {
		const victim = await newToken('engineer2@tarnwell.example', 'from an older deactivation');
		const admin = await cookieWithCode(await twoStepAdmin(db, 'tokens-test'));
		const [u] = await db.select().from(users).where(eq(users.email, 'engineer2@tarnwell.example'));
		// As deactivations before this rule left them: account disabled, token not revoked.
		await db.update(users).set({ status: 'disabled' }).where(eq(users.id, u.id));
		try {
			const res = await fetch(new URL('/admin/users?/reactivate', process.env.APP_URL).toString(), {
				method: 'POST',
				headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: process.env.APP_URL!, cookie: admin },
				body: `userId=${u.id}`,
				redirect: 'manual'
			});
			expect(res.status).toBe(200);
		} finally {
			await db.update(users).set({ status: 'active' }).where(eq(users.id, u.id));
		}
		expect((await api('GET', '/api/v1/me', { token: victim.token })).status).toBe(401);
	});
});
