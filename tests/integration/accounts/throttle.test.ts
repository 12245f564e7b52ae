import { afterAll, afterEach, beforeEach, describe, expect, it } from 'vitest';
import { testDb } from '../../support/env';
import * as throttle from '../../../src/lib/server/auth/throttle';
import { api, clearThrottle, DEMO_PASSWORD, postForm, signInApi } from './helpers';

const { db, pool } = testDb();
// Every test request comes from 127.0.0.1, so the address bucket is shared with every other test file:
// start each test from empty counters (whatever ran before) and leave none behind.
beforeEach(() => clearThrottle(db));
afterEach(() => clearThrottle(db));
afterAll(() => pool.end());

describe('sign-in throttle (5 failures in 15 minutes, per account and per client address, in MariaDB)', () => {
	it('blocks the account after 5 failures: the 6th try, with the right password, gets 429 and Retry-After', async () => {
		for (let i = 0; i < 5; i++) expect((await signInApi('purchaser@tarnwell.example', `wrong-guess-${i}-xxxx`)).res.status).toBe(401);
		const blocked = await signInApi('purchaser@tarnwell.example', DEMO_PASSWORD());
		expect(blocked.res.status).toBe(429);
		const retry = Number(blocked.res.headers.get('retry-after'));
		expect(retry).toBeGreaterThan(800);
		expect(retry).toBeLessThanOrEqual(900);
		expect(blocked.cookie).toBeNull();
		expect((await blocked.res.json()).error.code).toBe('too-many-attempts');
	});

	it('shows a clear message on the form (429) once blocked', async () => {
		for (let i = 0; i < 5; i++) await postForm('/signin', { email: 'stockroom@tarnwell.example', password: `nope-nope-${i}` });
		const res = await postForm('/signin', { email: 'stockroom@tarnwell.example', password: DEMO_PASSWORD() });
		expect(res.status).toBe(429);
		expect(await res.text()).toContain('Too many failed sign-ins');
	});

	it('blocks the client address after 5 failures on different accounts', async () => {
		for (let i = 0; i < 5; i++) expect((await signInApi(`nobody-${i}@tarnwell.example`, 'wrong-wrong-wrong')).res.status).toBe(401);
		expect((await signInApi('engineer@tarnwell.example', DEMO_PASSWORD())).res.status).toBe(429);
	});

	it('does not count successful sign-ins, and a success does not clear the address counter', async () => {
		for (let i = 0; i < 12; i++) expect((await signInApi('engineer@tarnwell.example')).res.status).toBe(200);
		for (let i = 0; i < 4; i++) await signInApi(`nobody-${i}@tarnwell.example`, 'wrong-wrong-wrong');
		expect((await signInApi('engineer@tarnwell.example')).res.status).toBe(200);
		await signInApi('nobody-9@tarnwell.example', 'wrong-wrong-wrong');
		expect((await signInApi('admin@tarnwell.example')).res.status).toBe(429);
	});

	it('counts per bucket in the database, so a second app instance sees the same counts (service level)', async () => {
		const now = new Date();
		const a = [throttle.buckets.account('x@tarnwell.example'), throttle.buckets.ip('192.0.2.1')];
		const b = [throttle.buckets.account('x@tarnwell.example'), throttle.buckets.ip('192.0.2.2')];
		for (let i = 0; i < 4; i++) await throttle.countAttempt(db, a, new Date(now.getTime() - (10 - i) * 60_000));
		expect(await throttle.retryAfterSeconds(db, b, now)).toBe(0);
		await throttle.countAttempt(db, b, now);
		// 5 on the account now: free again when the oldest (10 min ago) leaves the 15-minute window
		expect(await throttle.retryAfterSeconds(db, b, now)).toBe(5 * 60);
		expect(await throttle.retryAfterSeconds(db, [throttle.buckets.ip('192.0.2.2')], now)).toBe(0);
		// 16 minutes later the oldest attempt has aged out
		expect(await throttle.retryAfterSeconds(db, a, new Date(now.getTime() + 6 * 60_000))).toBe(0);
	});

	it('throttles reset requests too, with the same neutral answer until then', async () => {
		for (let i = 0; i < 5; i++) {
			const res = await postForm('/signin/forgot', { email: 'nobody-at-all@tarnwell.example' });
			expect(res.status).toBe(200);
		}
		const res = await postForm('/signin/forgot', { email: 'nobody-at-all@tarnwell.example' });
		expect(res.status).toBe(429);
		expect(await res.text()).toContain('Too many reset requests');
		expect((await api('GET', '/api/v1/openapi.json')).status).toBe(200);
	});
});
