import type { Handle } from '@sveltejs/kit';

/**
 * Two request-origin rules, run first in hooks.server.ts.
 *
 * 1. The form origin check (SECURITY.md 4.2.2, 13.2.3). It is SvelteKit's own `csrf.checkOrigin` rule,
 *    unchanged: a POST, PUT, PATCH or DELETE with a form content type must carry an Origin equal to
 *    the app's origin (ORIGIN). SvelteKit's version runs before hooks and answers a bare 403 ("Cross-site
 *    POST form submissions are forbidden"), which an enhanced form shows as nothing at all; so
 *    svelte.config.js turns it off (`trustedOrigins: ['*']`) and this hook enforces it, answering with a
 *    message the page shows: an ActionResult error for an enhanced form, a short page for a plain one,
 *    the API's error JSON under /api/.
 * 2. Loopback names: when ORIGIN is a loopback address (the local instance), a GET or HEAD that arrived
 *    under another loopback name (http://localhost:4173 when ORIGIN is http://127.0.0.1:4173) is
 *    redirected to the same path under ORIGIN, so that its forms post from ORIGIN. A deployment's
 *    ORIGIN is never a loopback name, so this never applies there.
 */

const LOOPBACK_HOSTS = new Set(['localhost', '127.0.0.1', '[::1]']);
const FORM_TYPES = ['application/x-www-form-urlencoded', 'multipart/form-data', 'text/plain', 'application/x-sveltekit-formdata'];
const UNSAFE = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

/** The host name of a Host header value ("localhost:4173" → "localhost", "[::1]:80" → "[::1]"). */
function hostName(host: string): string {
	const m = /^(\[[^\]]*\]|[^:]*)(?::\d+)?$/.exec(host.trim().toLowerCase());
	return m ? m[1] : '';
}

/**
 * Where to send a request that reached the local instance under another loopback name, or null.
 * `appUrl` is the app's URL for this request (built from ORIGIN by adapter-node); `hostHeader` the
 * Host the browser used.
 */
export function loopbackRedirect(appUrl: URL, hostHeader: string | null, method: string): string | null {
	if (method !== 'GET' && method !== 'HEAD') return null;
	if (!hostHeader || !LOOPBACK_HOSTS.has(appUrl.hostname.toLowerCase())) return null;
	const host = hostHeader.trim().toLowerCase();
	if (host === appUrl.host.toLowerCase() || !LOOPBACK_HOSTS.has(hostName(host))) return null;
	return appUrl.origin + appUrl.pathname + appUrl.search;
}

/** True for the content types a cross-site HTML form can send (SvelteKit's list). */
export function isFormContentType(contentType: string | null): boolean {
	const type = (contentType ?? '').split(';', 1)[0].trim().toLowerCase();
	return FORM_TYPES.includes(type);
}

/** SvelteKit's csrf.checkOrigin rule: true when the request must be refused. */
export function formOriginRefused(method: string, contentType: string | null, requestOrigin: string | null, appOrigin: string): boolean {
	return UNSAFE.has(method) && isFormContentType(contentType) && requestOrigin !== appOrigin;
}

function escapeHtml(s: string): string {
	return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/** The message for a refused form, naming where it came from and where to send it from. */
export function refusalMessage(requestOrigin: string | null, appUrl: URL): string {
	const from = requestOrigin && requestOrigin !== 'null' ? `from ${requestOrigin}` : 'from a page that did not say its address';
	return `This form was sent ${from}, but Glasscrib takes forms only from its own address, ${appUrl.origin}. Nothing was changed. Open ${appUrl.origin}${appUrl.pathname} and send the form again.`;
}

/** The 403 answer to a refused form, in the shape the sender can show. */
export function refusalResponse(request: Request, appUrl: URL): Response {
	const message = refusalMessage(request.headers.get('origin'), appUrl);
	const headers = { 'cache-control': 'no-store' };
	if (appUrl.pathname.startsWith('/api/')) {
		return Response.json({ error: { code: 'cross-site', message } }, { status: 403, headers });
	}
	const accept = request.headers.get('accept') ?? '';
	if (request.headers.get('x-sveltekit-action') === 'true' || accept === 'application/json') {
		// An ActionResult: `use:enhance` shows it on the error page with this message.
		return Response.json({ type: 'error', error: { message, code: 'cross-site' } }, { status: 403, headers });
	}
	const page = `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>Form refused · Glasscrib</title></head><body style="font-family: sans-serif; max-width: 40rem; margin: 3rem auto; padding: 0 1rem; line-height: 1.5"><h1>Form refused</h1><p data-testid="error-message">${escapeHtml(message)}</p><p><a href="${escapeHtml(appUrl.origin + appUrl.pathname)}">Open the page at ${escapeHtml(appUrl.origin)}</a></p></body></html>`;
	return new Response(page, {
		status: 403,
		headers: { ...headers, 'content-type': 'text/html; charset=utf-8', 'content-security-policy': "default-src 'none'; style-src 'unsafe-inline'; frame-ancestors 'none'" }
	});
}

/** Hook: the loopback redirect, then SvelteKit's form origin rule with a message. */
export const originCheck: Handle = async ({ event, resolve }) => {
	const { request, url } = event;
	const target = loopbackRedirect(url, request.headers.get('host'), request.method);
	if (target) return new Response(null, { status: 307, headers: { location: target, 'cache-control': 'no-store' } });
	if (formOriginRefused(request.method, request.headers.get('content-type'), request.headers.get('origin'), url.origin)) {
		return refusalResponse(request, url);
	}
	return resolve(event);
};
