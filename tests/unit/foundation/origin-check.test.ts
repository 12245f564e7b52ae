import { describe, expect, it } from 'vitest';
import { formOriginRefused, loopbackRedirect, originCheck, refusalResponse } from '../../../src/lib/server/origin-check';
import type { RequestEvent } from '@sveltejs/kit';

const app = new URL('http://127.0.0.1:4173/signin?redirectTo=%2Fparts');

describe('the local instance under its other loopback name', () => {
	it('sends GET and HEAD under localhost or [::1] to the same path under ORIGIN', () => {
		expect(loopbackRedirect(app, 'localhost:4173', 'GET')).toBe('http://127.0.0.1:4173/signin?redirectTo=%2Fparts');
		expect(loopbackRedirect(app, 'LOCALHOST:4173', 'HEAD')).toBe('http://127.0.0.1:4173/signin?redirectTo=%2Fparts');
		expect(loopbackRedirect(app, '[::1]:4173', 'GET')).toBe('http://127.0.0.1:4173/signin?redirectTo=%2Fparts');
		expect(loopbackRedirect(new URL('http://localhost:4173/x'), '127.0.0.1:4173', 'GET')).toBe('http://localhost:4173/x');
	});

	it('leaves ORIGIN itself, other methods, foreign names and deployments alone', () => {
		expect(loopbackRedirect(app, '127.0.0.1:4173', 'GET')).toBeNull();
		expect(loopbackRedirect(app, 'localhost:4173', 'POST')).toBeNull();
		expect(loopbackRedirect(app, 'evil.example', 'GET')).toBeNull();
		expect(loopbackRedirect(app, null, 'GET')).toBeNull();
		expect(loopbackRedirect(new URL('https://glasscrib.example.org/'), 'localhost:3000', 'GET')).toBeNull();
	});
});

describe('the form origin rule (SvelteKit’s csrf.checkOrigin, kept)', () => {
	const ours = 'http://127.0.0.1:4173';
	it('refuses unsafe form posts whose Origin is foreign or missing', () => {
		for (const type of ['application/x-www-form-urlencoded', 'multipart/form-data; boundary=x', 'text/plain;charset=UTF-8', 'application/x-sveltekit-formdata']) {
			for (const method of ['POST', 'PUT', 'PATCH', 'DELETE']) {
				expect(formOriginRefused(method, type, 'https://evil.example', ours)).toBe(true);
				expect(formOriginRefused(method, type, null, ours)).toBe(true);
				expect(formOriginRefused(method, type, 'http://localhost:4173', ours)).toBe(true);
				expect(formOriginRefused(method, type, ours, ours)).toBe(false);
			}
		}
	});
	it('leaves reads and non-form bodies to the other checks', () => {
		expect(formOriginRefused('GET', 'application/x-www-form-urlencoded', 'https://evil.example', ours)).toBe(false);
		expect(formOriginRefused('POST', 'application/json', 'https://evil.example', ours)).toBe(false);
		expect(formOriginRefused('POST', null, 'https://evil.example', ours)).toBe(false);
	});
});

describe('a refused form says why, in the shape its sender shows', () => {
	const post = (headers: Record<string, string>, url = app) => new Request(url, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded', ...headers }, body: 'a=1' });

	it('an enhanced form gets an ActionResult error with the message', async () => {
		const res = refusalResponse(post({ origin: 'http://localhost:4173', accept: 'application/json', 'x-sveltekit-action': 'true' }), app);
		expect(res.status).toBe(403);
		const body = await res.json();
		expect(body.type).toBe('error');
		expect(body.error.code).toBe('cross-site');
		expect(body.error.message).toContain('sent from http://localhost:4173');
		expect(body.error.message).toContain('Open http://127.0.0.1:4173/signin');
	});

	it('a plain form gets a page with the message (escaped)', async () => {
		const res = refusalResponse(post({ origin: 'https://evil.example/<b>', accept: 'text/html' }), app);
		expect(res.status).toBe(403);
		expect(res.headers.get('content-type')).toContain('text/html');
		const html = await res.text();
		expect(html).toContain('Form refused');
		expect(html).toContain('https://evil.example/&lt;b&gt;');
		expect(html).not.toContain('<b>');
	});

	it('a form post to the API gets the API error JSON', async () => {
		const apiUrl = new URL('http://127.0.0.1:4173/api/v1/imports');
		const res = refusalResponse(post({}, apiUrl), apiUrl);
		expect(res.status).toBe(403);
		expect((await res.json()).error.code).toBe('cross-site');
	});

	it('the hook refuses before anything else runs, and passes our own posts on', async () => {
		let resolved = 0;
		const resolve = async () => {
			resolved++;
			return new Response('ok');
		};
		const event = (request: Request) => ({ request, url: new URL(request.url) }) as unknown as RequestEvent;
		const refused = await originCheck({ event: event(post({ origin: 'https://evil.example' })), resolve });
		expect(refused.status).toBe(403);
		expect(resolved).toBe(0);
		const ok = await originCheck({ event: event(post({ origin: 'http://127.0.0.1:4173' })), resolve });
		expect(await ok.text()).toBe('ok');
		const moved = await originCheck({ event: event(new Request(app, { headers: { host: 'localhost:4173' } })), resolve });
		expect([moved.status, moved.headers.get('location')]).toEqual([307, app.toString()]);
		expect(resolved).toBe(1);
	});
});
