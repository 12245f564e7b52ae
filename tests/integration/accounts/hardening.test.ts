/**
 * Accounts under attack: sign-in bursts, password re-checks, reset requests that must not tell whether
 * an address has an account. A throwaway user of this file's own, so that no demo user is locked.
 */
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { testDb } from '../../support/env';
import { users } from '../../../src/lib/server/db/schema';
import { hashPassword } from '../../../src/lib/server/auth/password';
import { requestReset } from '../../../src/lib/server/accounts/passwords';
import { api, clearThrottle, cookieFor, postForm, signInApi } from './helpers';

const { db, pool } = testDb();
const email = `hardening-${Date.now().toString(36)}@tarnwell.example`;
const password = `hardening-${randomBytes(6).toString('hex')}`;

beforeAll(async () => {
	await db.insert(users).values({ email, name: 'Hardening Tester', role: 'engineer', passwordHash: await hashPassword(password, process.env.AUTH_PEPPER) });
});
afterAll(async () => {
	await clearThrottle(db);
	await db.delete(users).where(eq(users.email, email));
	await pool.end();
});
// Every test request comes from 127.0.0.1: start and end each test with empty counters.
beforeEach(() => clearThrottle(db));
afterEach(() => clearThrottle(db));

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

describe('sign-in throttle counts before it checks', () => {
	it('evaluates at most 5 of 40 parallel wrong passwords; the rest get 429', async () => {
		const answers = await Promise.all(Array.from({ length: 40 }, (_, i) => signInApi(email, `wrong-burst-${i}-xxxx`)));
		const statuses = answers.map((a) => a.res.status);
		const evaluated = statuses.filter((s) => s === 401).length;
		expect(statuses.filter((s) => s !== 401 && s !== 429)).toEqual([]);
		expect(evaluated).toBeGreaterThanOrEqual(1);
		expect(evaluated).toBeLessThanOrEqual(5);
		// Fewer than 5 may have been evaluated (an attempt must be within the limit in both the account's and the
		// address's bucket): the next wrong ones are evaluated until 5 in all, never more.
		let after = 0;
		while (after < 10 && (await signInApi(email, `wrong-after-${after}-xxxx`)).res.status === 401) after++;
		expect(evaluated + after).toBe(5);
		// and the right password is refused too while blocked
		expect((await signInApi(email, password)).res.status).toBe(429);
		console.log(`[figures] 40 parallel wrong passwords: ${evaluated} evaluated, ${40 - evaluated} refused with 429`);
	});
});

describe('password re-checks are throttled per user', () => {
	it('answers the 6th wrong password for a new token with 429 and Retry-After, and then even the right one', async () => {
		const cookie = await cookieFor(email, password);
		for (let i = 0; i < 5; i++) {
			const res = await api('POST', '/api/v1/tokens', { cookie }, { name: 'guess', password: `not-it-${i}-xxxxxxxx` });
			expect(res.status).toBe(403);
		}
		const sixth = await api('POST', '/api/v1/tokens', { cookie }, { name: 'guess', password: 'not-it-again-xxxxxxxx' });
		expect(sixth.status).toBe(429);
		expect(Number(sixth.headers.get('retry-after'))).toBeGreaterThan(800);
		expect((await sixth.json()).error.code).toBe('too-many-attempts');
		expect((await api('POST', '/api/v1/tokens', { cookie }, { name: 'right', password })).status).toBe(429);
	});

	it('counts wrong current passwords on the password-change form in the same bucket', async () => {
		const cookie = await cookieFor(email, password);
		const change = (current: string) => postForm('/account?/password', { current, password: 'a long new password here', confirm: 'a long new password here' }, { cookie });
		for (let i = 0; i < 3; i++) expect((await change(`not-mine-${i}-xxxx`)).status).toBe(400);
		for (let i = 0; i < 2; i++) expect((await api('POST', '/api/v1/tokens', { cookie }, { name: 'guess', password: `nope-${i}-xxxxxxxx` })).status).toBe(403);
		const blocked = await change('still-not-mine-xxxx');
		expect(blocked.status).toBe(429);
		expect(await blocked.text()).toContain('Too many wrong passwords');
		// The password did not change (a blocked attempt is not evaluated).
		await clearThrottle(db);
		expect((await signInApi(email, password)).res.status).toBe(200);
	});
});

describe('password-reset requests tell nothing about the address', () => {
	it('goes through the same steps for a known and an unknown address: the lookup and the mail come after the answer', async () => {
		const delivered: string[] = [];
		let release: () => void = () => undefined;
		const gate = new Promise<void>((r) => (release = r));
		// A delivery that never finishes while we look: the request answers all the same.
		const deliver = async (_db: unknown, to: string) => {
			delivered.push(to);
			await gate;
		};
		const unknown = `no-such-${Date.now()}@tarnwell.example`;
		expect(await requestReset(db, email, '192.0.2.10', deliver)).toEqual({ ok: true });
		expect(await requestReset(db, unknown, '192.0.2.10', deliver)).toEqual({ ok: true });
		await new Promise((r) => setTimeout(r, 50));
		expect(delivered).toEqual([email, unknown]);
		release();
	});

	it('answers a known and an unknown address over HTTP in comparable time (loose: median ratio under 4)', async () => {
		const unknown = `no-such-${Date.now()}@tarnwell.example`;
		const timed = async (address: string) => {
			await clearThrottle(db);
			const t0 = performance.now();
			const res = await postForm('/signin/forgot', { email: address });
			await res.text();
			expect(res.status).toBe(200);
			return performance.now() - t0;
		};
		const known: number[] = [];
		const other: number[] = [];
		for (let i = 0; i < 6; i++) {
			known.push(await timed(email));
			other.push(await timed(unknown));
		}
		const [a, b] = [median(known), median(other)];
		console.log(`[figures] reset request median: known address ${a.toFixed(1)} ms, unknown ${b.toFixed(1)} ms`);
		// Before, the known address took about 12 times as long (link, audit row and mail on the request).
		expect(Math.max(a, b) / Math.min(a, b)).toBeLessThan(4);
	});
});
