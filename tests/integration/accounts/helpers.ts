/** Small HTTP helpers for the accounts tests: sign in over the API, call the API, post forms. */
import { desc, like } from 'drizzle-orm';
import { testEnv } from '../../support/env';
import type { Db } from '../../../src/lib/server/db/client';
import { outboxMessages, signinFailures } from '../../../src/lib/server/db/schema';
import type { TwoStepUser } from '../../support/two-step';

export const APP = () => testEnv('APP_URL');
export const DEMO_PASSWORD = () => process.env.DEMO_PASSWORD || 'tarnwell-bench-2026';
export const url = (p: string) => new URL(p, APP()).toString();

/** The session cookie ("name=value") from a response, or null. */
export function sessionCookie(res: Response): string | null {
	for (const c of res.headers.getSetCookie()) {
		const [pair] = c.split(';');
		if (/^(__Host-)?gc_session=./.test(pair)) return pair;
	}
	return null;
}

export async function signInApi(email: string, password = DEMO_PASSWORD()) {
	const res = await fetch(url('/api/v1/session'), {
		method: 'POST',
		headers: { 'content-type': 'application/json', origin: APP() },
		body: JSON.stringify({ email, password })
	});
	return { res, cookie: sessionCookie(res) };
}

/** Signs in and returns the cookie, failing loudly when it does not work. */
export async function cookieFor(email: string, password = DEMO_PASSWORD()) {
	const { res, cookie } = await signInApi(email, password);
	if (res.status !== 200 || !cookie) throw new Error(`sign-in of ${email} gave ${res.status}: ${await res.text()}`);
	return cookie;
}

type Auth = { cookie?: string; token?: string; origin?: string | null };

/** A JSON API call; writes with a cookie carry our Origin unless told otherwise. */
export function api(method: string, path: string, auth: Auth = {}, body?: unknown) {
	const headers: Record<string, string> = {};
	if (auth.cookie) headers.cookie = auth.cookie;
	if (auth.token) headers.authorization = `Bearer ${auth.token}`;
	const origin = auth.origin === undefined ? APP() : auth.origin;
	if (origin) headers.origin = origin;
	if (body !== undefined) headers['content-type'] = 'application/json';
	return fetch(url(path), { method, headers, body: body === undefined ? undefined : JSON.stringify(body), redirect: 'manual' });
}

/** A plain (not enhanced) form post, as a browser without JavaScript sends it. */
export function postForm(path: string, fields: Record<string, string>, auth: Auth = {}) {
	const headers: Record<string, string> = { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: auth.origin ?? APP() };
	if (auth.cookie) headers.cookie = auth.cookie;
	return fetch(url(path), { method: 'POST', headers, body: new URLSearchParams(fields).toString(), redirect: 'manual' });
}

/** Waits for a message to the address (newer than `sinceId`) to reach the outbox table. */
export async function waitForMail(db: Db, to: string, sinceId = 0, subjectContains = '') {
	for (let i = 0; i < 60; i++) {
		const rows = await db
			.select()
			.from(outboxMessages)
			.where(like(outboxMessages.toAddresses, `%${to}%`))
			.orderBy(desc(outboxMessages.id))
			.limit(5);
		const hit = rows.find((r) => r.id > sinceId && r.subject.includes(subjectContains));
		if (hit) return hit;
		await new Promise((r) => setTimeout(r, 100));
	}
	throw new Error(`no mail to ${to} (${subjectContains}) arrived`);
}

export async function lastOutboxId(db: Db) {
	const [row] = await db.select({ id: outboxMessages.id }).from(outboxMessages).orderBy(desc(outboxMessages.id)).limit(1);
	return row?.id ?? 0;
}

/** The one-time link in a message's text. */
export function linkIn(text: string | null): string {
	const m = /(https?:\/\/\S+\/welcome\/[A-Za-z0-9_-]+)/.exec(text ?? '');
	if (!m) throw new Error(`no link in: ${text}`);
	return m[1];
}

/** Forgets all throttle counters, so that one test's failures do not block the next. */
export async function clearThrottle(db: Db) {
	await db.delete(signinFailures);
}

export { twoStepAdmin, type TwoStepUser } from '../../support/two-step';

/**
 * Signs a two-step user in over the API (password, then a fresh code) and returns the cookie of the
 * full session, failing loudly when a step does not work.
 */
export async function cookieWithCode(user: TwoStepUser) {
	const { res, cookie } = await signInApi(user.email, user.password);
	const body = await res.json();
	if (res.status !== 200 || !cookie || body.secondFactorRequired !== true) throw new Error(`password step of ${user.email} gave ${res.status}: ${JSON.stringify(body)}`);
	const second = await api('POST', '/api/v1/session/second-factor', { cookie }, { code: await user.freshCode() });
	const full = sessionCookie(second);
	if (second.status !== 200 || !full) throw new Error(`code step of ${user.email} gave ${second.status}: ${await second.text()}`);
	return full;
}
