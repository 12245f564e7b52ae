/**
 * The role matrix: every route of the route tree × {anonymous, admin, stockroom, engineer, purchaser},
 * checked against route-access.ts. Allowed = not 401/403; denied = 403 for a signed-in wrong role,
 * 401 (API) or 303 to /signin (pages) for anonymous. Runs against the built app at APP_URL.
 *
 * Two-step sign-in: 'admin' is a throwaway administrator with two-step sign-in on and a session that
 * gave its code. Two more identities are walked: the demo admin, who has not set it up (admin-only
 * routes: 403; everything else as for an administrator), and a half-signed-in session (password
 * given, code missing: only HALF_SIGNED_IN below; pages otherwise 303 to /signin/code, the API 401).
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROUTES_DIR, exportedMethods, routeModules } from '../../unit/api/route-files';
import { ROUTE_ACCESS, type Access, type Method } from './route-access';
import { APP, clearThrottle, cookieFor, cookieWithCode, signInApi, twoStepAdmin, type TwoStepUser } from './helpers';
import { testDb } from '../../support/env';
import type { Role } from '../../../src/lib/server/db/schema';

const DEMO: Record<Exclude<Role, 'admin'>, string> = {
	stockroom: 'stockroom@tarnwell.example',
	engineer: 'engineer@tarnwell.example',
	purchaser: 'purchaser@tarnwell.example'
};
const DEMO_ADMIN = 'admin@tarnwell.example';
const IDENTITIES = ['anonymous', 'admin', 'stockroom', 'engineer', 'purchaser', 'admin-without-two-step', 'half-signed-in'] as const;
type Identity = (typeof IDENTITIES)[number];

/** What a half-signed-in session may reach (the rest: 303 to /signin/code or 401). */
const HALF_SIGNED_IN = new Set([
	'/signin/code GET',
	'/signin/code action:default',
	'/signout GET',
	'/signout action:default',
	'/api/v1/session DELETE',
	'/api/v1/session/second-factor POST',
	'/health GET'
]);

interface Probe {
	routeId: string;
	kind: 'page' | 'endpoint';
	/** "GET", "DELETE", or "action:<name>" */
	what: string;
}

/** Everything the route tree exposes: page loads (+page.svelte or +page.server.ts), form actions, endpoint methods. */
function probesFromTree(): Probe[] {
	const probes: Probe[] = [];
	const pages = new Set<string>();
	const walk = (dir: string) => {
		for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
			if (e.isDirectory()) walk(path.join(dir, e.name));
			else if (/^\+page(\.server)?\.(ts|svelte)$/.test(e.name)) {
				pages.add('/' + path.relative(ROUTES_DIR, dir).split(path.sep).filter(Boolean).join('/'));
			}
		}
	};
	walk(ROUTES_DIR);
	for (const id of pages) probes.push({ routeId: id === '/' ? '/' : id, kind: 'page', what: 'GET' });
	for (const m of routeModules()) {
		if (m.kind === 'endpoint') for (const method of exportedMethods(m.file)) probes.push({ routeId: m.routeId, kind: 'endpoint', what: method });
		if (m.kind === 'page') {
			const src = fs.readFileSync(m.file, 'utf8');
			const block = /export\s+const\s+actions\s*=\s*\{([\s\S]*?)\n\}\s*satisfies/.exec(src);
			if (block) for (const a of block[1].matchAll(/^\t(\w+)\s*:\s*async/gm)) probes.push({ routeId: m.routeId, kind: 'page', what: `action:${a[1]}` });
		}
	}
	return probes;
}

function accessOf(p: Probe): Access | undefined {
	const entry = ROUTE_ACCESS[p.routeId];
	if (!entry) return undefined;
	return p.what.startsWith('action:') ? entry.actions?.[p.what.slice(7)] : entry[p.what as Method];
}

const roleOf = (who: Identity): Role | null => (who === 'anonymous' || who === 'half-signed-in' ? null : who === 'admin-without-two-step' ? 'admin' : who);
const allowed = (access: Access, who: Identity) => {
	const role = roleOf(who);
	return access === 'public' || (role !== null && access.includes(role));
};
const adminOnly = (access: Access) => access !== 'public' && access.length > 0 && access.every((r) => r === 'admin');

const { db, pool } = testDb();
const cookies: Partial<Record<Identity, string>> = {};
let admin: TwoStepUser;

/** A new session of the identity (a half-signed-in one: the admin's password without the code). */
async function signInAs(who: Exclude<Identity, 'anonymous'>): Promise<string> {
	if (who === 'admin') return cookieWithCode(admin);
	if (who === 'admin-without-two-step') return cookieFor(DEMO_ADMIN);
	if (who === 'half-signed-in') {
		const { res, cookie } = await signInApi(admin.email, admin.password);
		if (res.status !== 200 || !cookie) throw new Error(`half sign-in gave ${res.status}`);
		return cookie;
	}
	return cookieFor(DEMO[who]);
}

beforeAll(async () => {
	await clearThrottle(db);
	admin = await twoStepAdmin(db, 'role-matrix');
	for (const who of IDENTITIES) if (who !== 'anonymous') cookies[who] = await signInAs(who);
});
afterAll(() => pool.end());

async function send(p: Probe, who: Identity) {
	const entry = ROUTE_ACCESS[p.routeId];
	const target = new URL(entry.url ?? p.routeId, APP());
	let cookie = who === 'anonymous' ? undefined : cookies[who];
	if (entry.endsSession && who !== 'anonymous' && p.what !== 'GET') cookie = await signInAs(who);
	const headers: Record<string, string> = { origin: APP() };
	if (cookie) headers.cookie = cookie;
	let method = p.what;
	let body: string | undefined;
	if (p.what.startsWith('action:')) {
		const name = p.what.slice(7);
		if (name !== 'default') target.search = `?/${name}`;
		method = 'POST';
		headers['content-type'] = 'application/x-www-form-urlencoded';
		headers.accept = 'text/html';
		body = '';
	} else if (p.kind === 'page') {
		headers.accept = 'text/html';
	} else if (method !== 'GET') {
		headers['content-type'] = 'application/json';
		body = '{}';
	}
	return fetch(target, { method, headers, body, redirect: 'manual' });
}

describe('role matrix', () => {
	const probes = probesFromTree();

	it('finds the routes of the tree', () => expect(probes.length).toBeGreaterThan(20));

	it('lists every route, method and form action in route-access.ts (add yours there)', () => {
		const missing = probes.filter((p) => accessOf(p) === undefined).map((p) => `${p.routeId} ${p.what}`);
		expect(missing, 'routes missing from tests/integration/accounts/route-access.ts').toEqual([]);
		const inTree = new Set(probes.map((p) => `${p.routeId} ${p.what}`));
		const stale: string[] = [];
		for (const [id, entry] of Object.entries(ROUTE_ACCESS)) {
			for (const m of ['GET', 'POST', 'PUT', 'PATCH', 'DELETE'] as const) if (entry[m] && !inTree.has(`${id} ${m}`)) stale.push(`${id} ${m}`);
			for (const a of Object.keys(entry.actions ?? {})) if (!inTree.has(`${id} action:${a}`)) stale.push(`${id} action:${a}`);
			if (/\[/.test(id) && !entry.url) stale.push(`${id}: needs a sample url`);
		}
		expect(stale, 'entries in route-access.ts without a route (or without a sample url)').toEqual([]);
	});

	for (const p of probes) {
		it(`${p.what} ${p.routeId}`, async () => {
			const access = accessOf(p);
			if (!access) return; // reported by the listing test above
			const wrong: string[] = [];
			for (const who of IDENTITIES) {
				const res = await send(p, who);
				const location = res.headers.get('location') ?? '';
				const toSignin = res.status === 303 && location.startsWith('/signin');
				const ok = allowed(access, who);
				await res.body?.cancel();
				if (who === 'half-signed-in') {
					const reachable = HALF_SIGNED_IN.has(`${p.routeId} ${p.what}`);
					const sentToCode = p.kind === 'endpoint' ? res.status === 401 : res.status === 303 && location.startsWith('/signin/code');
					if (reachable && (res.status === 401 || res.status === 403 || sentToCode)) wrong.push(`${who}: expected reachable, got ${res.status} ${location}`);
					if (!reachable && !sentToCode) wrong.push(`${who}: expected ${p.kind === 'endpoint' ? '401' : '303 to /signin/code'}, got ${res.status} ${location}`);
				} else if (who === 'admin-without-two-step' && adminOnly(access)) {
					if (res.status !== 403) wrong.push(`${who}: expected 403 (two-step sign-in not set up), got ${res.status} ${location}`);
				} else if (ok) {
					if (res.status === 401 || res.status === 403 || (who === 'anonymous' && toSignin && p.routeId !== '/signin'))
						wrong.push(`${who}: expected allowed, got ${res.status} ${location}`);
				} else if (who === 'anonymous') {
					const expected = p.kind === 'endpoint' ? res.status === 401 : toSignin;
					if (!expected) wrong.push(`anonymous: expected ${p.kind === 'endpoint' ? '401' : '303 to /signin'}, got ${res.status} ${location}`);
				} else if (res.status !== 403) {
					wrong.push(`${who}: expected 403, got ${res.status} ${location}`);
				}
			}
			expect(wrong).toEqual([]);
		});
	}
});
