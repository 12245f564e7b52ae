import { afterAll, afterEach, beforeEach, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import { testDb } from '../../support/env';
import { sessions } from '../../../src/lib/server/db/schema';
import { api, APP, clearThrottle, cookieFor, signInApi, url } from './helpers';

const { db, pool } = testDb();
afterAll(() => pool.end());
beforeEach(() => clearThrottle(db));
// This file makes failing sign-ins: leave none behind in the shared 127.0.0.1 address bucket.
afterEach(() => clearThrottle(db));

/** The cookie carries the plain id; the table holds its SHA-256 (auth/sessions.ts). */
const plainId = (cookie: string) => cookie.split('=')[1];
const sessionId = (cookie: string) => createHash('sha256').update(plainId(cookie)).digest('hex');
const maxAge = (res: Response) => {
	const raw = res.headers.getSetCookie().find((c) => c.startsWith('gc_session='));
	return raw ? Number(/Max-Age=(\d+)/i.exec(raw)?.[1]) : null;
};

describe('sessions over the API', () => {
	it('signs in with a fresh HttpOnly, SameSite=Lax cookie (not Secure on an http origin) and answers /me', async () => {
		const a = await signInApi('engineer@tarnwell.example');
		expect(a.res.status).toBe(200);
		expect(await a.res.json()).toMatchObject({ user: { email: 'engineer@tarnwell.example', role: 'engineer' } });
		const raw = a.res.headers.getSetCookie().find((c) => c.startsWith('gc_session='))!;
		expect(raw).toMatch(/HttpOnly/i);
		expect(raw).toMatch(/SameSite=Lax/i);
		expect(raw).toMatch(/Path=\//i);
		expect(raw).not.toMatch(/Domain=/i);
		expect(APP().startsWith('http:')).toBe(true);
		expect(raw).not.toMatch(/Secure/i);
		const b = await signInApi('engineer@tarnwell.example');
		expect(b.cookie).not.toBe(a.cookie);
		const me = await api('GET', '/api/v1/me', { cookie: a.cookie! });
		expect(me.status).toBe(200);
		expect(await me.json()).toMatchObject({ user: { role: 'engineer' }, authVia: 'session' });
	});

	it('gives the same 401 for a wrong password and for an unknown address', async () => {
		const wrong = await signInApi('engineer@tarnwell.example', 'not-the-password-at-all');
		const unknown = await signInApi('nobody@tarnwell.example', 'not-the-password-at-all');
		expect(wrong.res.status).toBe(401);
		expect(unknown.res.status).toBe(401);
		expect(await wrong.res.json()).toEqual(await unknown.res.json());
		expect(wrong.cookie).toBeNull();
	});

	it('answers bad input with 400 and a non-JSON body with 415', async () => {
		const bad = await api('POST', '/api/v1/session', {}, { email: 'x', password: '' });
		expect(bad.status).toBe(400);
		expect((await bad.json()).error.fields).toHaveProperty('email');
		const extra = await api('POST', '/api/v1/session', {}, { email: 'engineer@tarnwell.example', password: 'x', role: 'admin' });
		expect(extra.status).toBe(400);
		const text = await fetch(url('/api/v1/session'), { method: 'POST', headers: { 'content-type': 'application/xml', origin: APP() }, body: '<hi/>' });
		expect(text.status).toBe(415);
	});

	it('ends the session on the server at sign-out', async () => {
		const cookie = await cookieFor('purchaser@tarnwell.example');
		const out = await api('DELETE', '/api/v1/session', { cookie });
		expect(out.status).toBe(204);
		const rows = await db.select().from(sessions).where(eq(sessions.id, sessionId(cookie)));
		expect(rows).toHaveLength(0);
		expect((await api('GET', '/api/v1/me', { cookie })).status).toBe(401);
	});

	it('refuses a session past its idle expiry', async () => {
		const cookie = await cookieFor('stockroom@tarnwell.example');
		await db.update(sessions).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(sessions.id, sessionId(cookie)));
		const res = await api('GET', '/api/v1/me', { cookie });
		expect(res.status).toBe(401);
		expect((await res.json()).error.code).toBe('unauthenticated');
	});

	it('refuses a session older than 12 hours even while it is being used', async () => {
		const cookie = await cookieFor('stockroom@tarnwell.example');
		expect((await api('GET', '/api/v1/me', { cookie })).status).toBe(200);
		await db
			.update(sessions)
			.set({ createdAt: new Date(Date.now() - 12 * 3600_000 - 60_000) })
			.where(eq(sessions.id, sessionId(cookie)));
		expect((await api('GET', '/api/v1/me', { cookie })).status).toBe(401);
	});

	it('renews a session when half of its idle time has passed', async () => {
		const cookie = await cookieFor('stockroom@tarnwell.example');
		const soon = new Date(Date.now() + 10 * 60_000);
		await db.update(sessions).set({ expiresAt: soon }).where(eq(sessions.id, sessionId(cookie)));
		const res = await api('GET', '/api/v1/me', { cookie });
		expect(res.status).toBe(200);
		const [row] = await db.select().from(sessions).where(eq(sessions.id, sessionId(cookie)));
		expect(new Date(row.expiresAt).getTime()).toBeGreaterThan(soon.getTime() + 60_000);
		expect(res.headers.getSetCookie().some((c) => c.startsWith('gc_session='))).toBe(true);
	});

	it('refuses cookie API writes without our Origin (CSRF), but not bearer requests', async () => {
		const cookie = await cookieFor('engineer@tarnwell.example');
		const none = await api('DELETE', '/api/v1/session', { cookie, origin: null });
		expect(none.status).toBe(403);
		const evil = await api('DELETE', '/api/v1/session', { cookie, origin: 'https://evil.example' });
		expect(evil.status).toBe(403);
		expect((await evil.json()).error.code).toBe('cross-site');
		// the session survived both attempts
		expect((await api('GET', '/api/v1/me', { cookie })).status).toBe(200);
		const login = await api('POST', '/api/v1/session', { origin: 'https://evil.example' }, { email: 'engineer@tarnwell.example', password: 'x' });
		expect(login.status).toBe(403);
	});

	it('keeps SvelteKit’s origin check on form posts', async () => {
		const res = await fetch(url('/signin'), {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', origin: 'https://evil.example' },
			body: 'email=engineer%40tarnwell.example&password=x'
		});
		expect(res.status).toBe(403);
	});

	it('stores only the SHA-256 of the cookie’s random session id, never the id itself', async () => {
		const cookie = await cookieFor('engineer@tarnwell.example');
		expect(plainId(cookie).length).toBeGreaterThanOrEqual(40); // 25 random bytes, base32
		const count = async (id: string) =>
			Number(((await db.execute(sql`select count(*) as n from sessions where id = ${id}`))[0] as unknown as { n: number }[])[0].n);
		expect(await count(plainId(cookie))).toBe(0);
		expect(await count(sessionId(cookie))).toBe(1);
		// A row's id put in a cookie signs nobody in.
		expect((await api('GET', '/api/v1/me', { cookie: `gc_session=${sessionId(cookie)}` })).status).toBe(401);
	});

	it('gives the cookie a Max-Age that ends with the session’s absolute end (12 h), also when renewed', async () => {
		const { res, cookie } = await signInApi('stockroom@tarnwell.example');
		const atStart = maxAge(res)!;
		expect(atStart).toBeLessThanOrEqual(12 * 3600);
		expect(atStart).toBeGreaterThan(12 * 3600 - 120);
		// 11 hours in, due for renewal: the renewed cookie lives one more hour at most, not 12 h or 400 days.
		await db
			.update(sessions)
			.set({ createdAt: new Date(Date.now() - 11 * 3600_000), expiresAt: new Date(Date.now() + 10 * 60_000) })
			.where(eq(sessions.id, sessionId(cookie!)));
		const renewed = await api('GET', '/api/v1/me', { cookie: cookie! });
		expect(renewed.status).toBe(200);
		const later = maxAge(renewed)!;
		expect(later).toBeLessThanOrEqual(3600);
		expect(later).toBeGreaterThan(3600 - 120);
	});
});
