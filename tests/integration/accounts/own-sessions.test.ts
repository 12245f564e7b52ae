/**
 * /account lists the user's own sessions and ends them (SECURITY.md V3: "/account lists and ends
 * sessions"). A throwaway user, so that ending "every other session" touches no session of the
 * demo users that other test files are using.
 */
import { createHash, randomBytes } from 'node:crypto';
import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { testDb } from '../../support/env';
import { users } from '../../../src/lib/server/db/schema';
import { hashPassword } from '../../../src/lib/server/auth/password';
import { api, APP, cookieFor, sessionCookie, url } from './helpers';

const { db, pool } = testDb();
const email = `sessions-${Date.now().toString(36)}@tarnwell.example`;
const password = `own-sessions-${randomBytes(6).toString('hex')}`;
afterAll(async () => {
	await db.delete(users).where(eq(users.email, email));
	await pool.end();
});

const handleOf = (cookie: string) => createHash('sha256').update(cookie.split('=')[1]).digest('hex').slice(0, 24);

async function signIn(userAgent: string) {
	const res = await fetch(url('/api/v1/session'), {
		method: 'POST',
		headers: { 'content-type': 'application/json', origin: APP(), 'user-agent': userAgent },
		body: JSON.stringify({ email, password })
	});
	expect(res.status).toBe(200);
	return sessionCookie(res)!;
}

/** A form action posted as the enhanced form does; answers SvelteKit's action result. */
async function action(name: string, cookie: string, fields: Record<string, string>) {
	const res = await fetch(url(`/account?/${name}`), {
		method: 'POST',
		headers: { cookie, origin: APP(), 'content-type': 'application/x-www-form-urlencoded', 'x-sveltekit-action': 'true', accept: 'application/json' },
		body: new URLSearchParams(fields).toString()
	});
	const out = await res.json();
	return { type: out.type as string, status: out.status as number | undefined, data: out.data ? (JSON.parse(out.data) as unknown) : null };
}

const alive = async (cookie: string) => (await api('GET', '/api/v1/me', { cookie })).status === 200;

describe('your own sessions on /account', () => {
	it('lists them without their ids, and ends one, then every other, never the current one', async () => {
		const [id] = await db
			.insert(users)
			.values({ email, name: 'Session Tester', role: 'engineer', passwordHash: await hashPassword(password, process.env.AUTH_PEPPER) })
			.$returningId();
		expect(id.id).toBeGreaterThan(0);
		const laptop = await signIn('Mozilla/5.0 (X11; Linux x86_64; rv:128.0) Gecko/20100101 Firefox/128.0');
		const script = await signIn('curl/8.5.0');
		const here = await signIn('Mozilla/5.0 (X11; Linux x86_64) AppleWebKit/537.36 (KHTML, like Gecko) Chromium/131.0 Safari/537.36');

		const page = await (await fetch(url('/account'), { headers: { cookie: here } })).text();
		expect(page).toContain('Where you are signed in');
		expect(page).toContain('Firefox on Linux');
		expect(page).toContain('Script');
		expect(page).toContain('this browser');
		for (const c of [laptop, script, here]) {
			expect(page).toContain(handleOf(c));
			expect(page).not.toContain(c.split('=')[1]); // the secret never reaches the page
		}

		// Another user cannot end this user's session, even knowing its handle.
		const other = await cookieFor('engineer@tarnwell.example');
		expect(await action('endSession', other, { handle: handleOf(laptop) })).toMatchObject({ type: 'failure', status: 404 });
		expect(await alive(laptop)).toBe(true);

		// The current session is not ended this way (that is "Sign out").
		expect(await action('endSession', here, { handle: handleOf(here) })).toMatchObject({ type: 'failure', status: 404 });
		expect(await action('endSession', here, { handle: 'not-a-handle' })).toMatchObject({ type: 'failure', status: 400 });

		expect(await action('endSession', here, { handle: handleOf(laptop) })).toMatchObject({ type: 'success' });
		expect(await alive(laptop)).toBe(false);
		expect(await alive(script)).toBe(true);

		// "Everywhere else" needs its button's confirmation; an empty post changes nothing.
		expect(await action('endOtherSessions', here, {})).toMatchObject({ type: 'failure', status: 400 });
		expect(await alive(script)).toBe(true);
		expect(await action('endOtherSessions', here, { confirm: 'yes' })).toMatchObject({ type: 'success' });
		expect(await alive(script)).toBe(false);
		expect(await alive(here)).toBe(true);
		expect(await alive(other)).toBe(true);
	});
});
