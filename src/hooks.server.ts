import { randomUUID } from 'node:crypto';
import { type Handle, type HandleServerError, type ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { db } from '$lib/server/db';
import { resolveSession } from '$lib/server/auth/sessions';
import { resolveBearer } from '$lib/server/auth/tokens';
import { errorResponse } from '$lib/server/api/http';
import { formBody } from '$lib/server/api/form-body';
import { isHalfSignedInPath, isPublicPath, secondFactorPageFor } from '$lib/server/auth/public-paths';
import { env } from '$env/dynamic/private';
import { watchFlags } from '$lib/server/purchasing/watch';
import { appStore } from '$lib/server/files/store';
import { startImportWatchdog } from '$lib/server/imports/watchdog';
import { originCheck } from '$lib/server/origin-check';
import { isUnavailable } from '$lib/server/db/errno';

/**
 * The database went away while a hook (the session lookup) was using it: 503 with Retry-After, as the API
 * handlers answer, instead of a 500. A load balancer retries elsewhere; a person sees "try again".
 */
const databaseDown: Handle = async ({ event, resolve }) => {
	try {
		return await resolve(event);
	} catch (err) {
		if (!isUnavailable(err)) throw err;
		console.error(`[db] the database is not reachable (${event.request.method} ${event.url.pathname}):`, err instanceof Error ? err.message : err);
		const message = 'The database cannot be reached just now; try again in a moment.';
		if (event.url.pathname.startsWith('/api/')) return errorResponse(503, 'database-unavailable', message, undefined, { 'Retry-After': '5' });
		return new Response(message, { status: 503, headers: { 'Retry-After': '5', 'Content-Type': 'text/plain; charset=utf-8' } });
	}
};

/** Resolves the user once per request: a bearer token on the API, else the session cookie. */
const resolveUser: Handle = async ({ event, resolve }) => {
	event.locals.requestId = randomUUID();
	event.locals.user = null;
	event.locals.session = null;
	event.locals.authVia = null;
	event.locals.tokenId = null;
	event.locals.secondFactor = 'none';
	const authz = event.request.headers.get('authorization');
	if (authz && event.url.pathname.startsWith('/api/')) {
		const match = /^Bearer\s+(\S+)$/i.exec(authz);
		const found = match ? await resolveBearer(db, match[1]) : null;
		if (!found) return errorResponse(401, 'invalid-token', 'The API token is not valid (unknown, revoked or expired).');
		const { tokenId, twoStep, ...user } = found;
		event.locals.user = user;
		event.locals.authVia = 'token';
		event.locals.tokenId = tokenId;
		// A token stands for its owner's sign-in: it counts as verified when the owner has two-step sign-in on.
		event.locals.secondFactor = twoStep ? 'verified' : 'none';
		return resolve(event);
	}
	const resolved = await resolveSession(event.cookies);
	if (resolved) {
		const { user, session } = resolved;
		event.locals.user = { id: user.id, email: user.email, name: user.name, role: user.role };
		event.locals.session = session;
		event.locals.authVia = 'session';
		event.locals.secondFactor = user.twoStep ? (session.secondFactorAt ? 'verified' : 'pending') : 'none';
	}
	return resolve(event);
};

/**
 * Deny by default: anything that is not explicitly public needs a signed-in user (routes still check roles).
 * A half-signed-in session (two-step code missing) reaches only the code page, sign-out and assets.
 */
const gate: Handle = async ({ event, resolve }) => {
	if (event.locals.secondFactor === 'pending' && !isHalfSignedInPath(event.url.pathname, event.request.method)) {
		if (event.url.pathname.startsWith('/api/')) {
			return errorResponse(401, 'second-factor-required', 'Give your two-step sign-in code first: POST /api/v1/session/second-factor with { "code" }.');
		}
		return new Response(null, { status: 303, headers: { location: secondFactorPageFor(event.url) } });
	}
	if (event.locals.user || isPublicPath(event.url.pathname, event.request.method)) return resolve(event);
	if (event.url.pathname.startsWith('/api/')) return errorResponse(401, 'unauthenticated', 'Sign in first.');
	const back = event.url.pathname + event.url.search;
	return new Response(null, { status: 303, headers: { location: `/signin?redirectTo=${encodeURIComponent(back)}` } });
};

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * CSRF net for the API: a write (POST, PUT, PATCH, DELETE) under /api/ without a bearer token must
 * come from our own origin (ORIGIN). When a session cookie signed it in, the Origin header is
 * required; a foreign Origin is refused in any case. Bearer requests carry no ambient credential
 * and are exempt. Form posts to pages are checked by SvelteKit's own origin check.
 */
const apiOrigin: Handle = async ({ event, resolve }) => {
	const { request, url } = event;
	if (!url.pathname.startsWith('/api/') || SAFE_METHODS.has(request.method) || event.locals.authVia === 'token') return resolve(event);
	const origin = request.headers.get('origin');
	const ours = (env.ORIGIN ?? url.origin).replace(/\/+$/, '');
	if (origin ? origin !== ours : event.locals.authVia === 'session') {
		return errorResponse(403, 'cross-site', 'This request must come from the Glasscrib pages (Origin header missing or foreign).');
	}
	return resolve(event);
};

/** Security headers on every response; no caching of anything a signed-in user sees. */
const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	const h = response.headers;
	const set = (k: string, v: string) => {
		if (!h.has(k)) h.set(k, v);
	};
	try {
		set('X-Frame-Options', 'DENY');
		set('X-Content-Type-Options', 'nosniff');
		set('Referrer-Policy', 'same-origin');
		// The camera only for the label scan page, on our own origin (links to it reload the page, so the policy applies).
		set('Permissions-Policy', `camera=${event.url.pathname === '/scan' ? '(self)' : '()'}, microphone=(), geolocation=(), payment=(), usb=()`);
		set('Strict-Transport-Security', 'max-age=31536000; includeSubDomains');
		if (!event.url.pathname.startsWith('/_app/immutable/')) set('Cache-Control', 'no-store');
		// API JSON (SECURITY.md 14.4.1): the charset said, and never shown as a page if a browser is sent to it.
		if (event.url.pathname.startsWith('/api/') && /^application\/json\s*$/i.test(h.get('content-type') ?? '')) {
			h.set('Content-Type', 'application/json; charset=utf-8');
			set('Content-Disposition', 'attachment; filename="api.json"');
		}
	} catch {
		// some responses (e.g. from fetch) have immutable headers; they pass unchanged
	}
	return response;
};

// watchFlags runs after the others: it schedules the reorder digest check after successful writes (purchasing/watch.ts).
/**
 * At start: create the file store's bucket when it does not exist. Not awaited by requests and not
 * fatal: with S3 down the app starts anyway, uploads answer 503, and the bucket is tried again on use.
 */
export const init: ServerInit = async () => {
	void appStore()
		.ensureBucket()
		.catch((err) => console.warn('[files] the file store is not reachable at start; uploads will try again:', err instanceof Error ? err.message : err));
	// Imports left running by a process or connection that died are settled now and every 15 s (imports/watchdog.ts).
	startImportWatchdog(db);
};

// originCheck: SvelteKit's form origin rule with a readable refusal, and the local instance's other loopback name.
export const handle: Handle = sequence(securityHeaders, databaseDown, originCheck, resolveUser, gate, formBody, apiOrigin, watchFlags);

export const handleError: HandleServerError = ({ error: err, event, status, message }) => {
	const id = event.locals?.requestId ?? randomUUID();
	if (status >= 500) console.error(`[${id}] ${event.request.method} ${event.url.pathname}:`, err);
	return { message: status >= 500 ? 'Something went wrong on the server.' : message, id };
};

