// http://localhost:<port> works as well as http://127.0.0.1:<port> (ORIGIN), and a form refused for
// its origin says so instead of a blank 403. (Issue 13, item 9.)
import { afterAll, describe, expect, it } from 'vitest';
import http from 'node:http';
import { openBrowser, DEMO_PASSWORD } from '../../support/browser';
import { testEnv } from '../../support/env';

const app = () => new URL(testEnv('APP_URL'));

/** A GET to the app's port with the given Host header (no redirect following). */
function getWithHost(pathname: string, host: string): Promise<{ status: number; location?: string }> {
	return new Promise((resolve, reject) => {
		const req = http.get({ host: '127.0.0.1', port: app().port, path: pathname, headers: { host } }, (res) => {
			res.resume();
			resolve({ status: res.statusCode ?? 0, location: res.headers.location });
		});
		req.on('error', reject);
	});
}

describe('the local instance under localhost', () => {
	const browsers: { close: () => Promise<void> }[] = [];
	afterAll(async () => {
		for (const b of browsers) await b.close();
	});

	it('redirects localhost to ORIGIN, path and query kept', async () => {
		const port = app().port;
		expect(await getWithHost('/signin?redirectTo=%2Fparts', `localhost:${port}`)).toEqual({
			status: 307,
			location: `${app().origin}/signin?redirectTo=%2Fparts`
		});
		expect((await getWithHost('/signin', `127.0.0.1:${port}`)).status).toBe(200);
		// another name is not redirected there
		expect((await getWithHost('/signin', `evil.example`)).status).toBe(200);
	});

	it('signs in from http://localhost:<port> in a browser', async () => {
		const b = await openBrowser();
		browsers.push(b);
		const { page } = b;
		await page.goto(`http://localhost:${app().port}/signin`);
		await page.fill('input[name=email]', 'engineer@tarnwell.example');
		await page.fill('input[name=password]', DEMO_PASSWORD());
		await Promise.all([page.waitForURL((u) => !u.pathname.startsWith('/signin'), { timeout: 20_000 }), page.click('button:has-text("Sign in")')]);
		expect(new URL(page.url()).pathname).toBe('/');
		expect(await page.locator('h1').first().textContent()).not.toContain('Sign in');
		// the session works on the page we were sent to
		expect(new URL(page.url()).origin).toBe(app().origin);
	});

	it('shows a message when a form is refused for its origin (enhanced form)', async () => {
		const b = await openBrowser();
		browsers.push(b);
		const { page } = b;
		await page.goto(`${app().origin}/signin`);
		// The browser sends the page's Origin (Chromium ignores an override in route.continue); send the
		// post ourselves with a foreign one, as a page opened elsewhere would, and hand the answer back.
		await page.route('**/signin**', async (route) => {
			if (route.request().method() !== 'POST') return route.continue();
			const response = await route.fetch({ headers: { ...route.request().headers(), origin: 'http://localhost:1' } });
			await route.fulfill({ response });
		});
		await page.fill('input[name=email]', 'engineer@tarnwell.example');
		await page.fill('input[name=password]', DEMO_PASSWORD());
		await page.click('button:has-text("Sign in")');
		await expect.poll(() => page.locator('[data-testid=error-message]').textContent(), { timeout: 15_000 }).toContain('sent from http://localhost:1');
		expect(await page.locator('h1').textContent()).toContain('Form refused');
	});

	it('answers a refused plain form post with a page that says why', async () => {
		const res = await fetch(new URL('/signin', app()), {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: 'https://evil.example' },
			body: 'email=engineer%40tarnwell.example&password=x'
		});
		expect(res.status).toBe(403);
		const html = await res.text();
		expect(html).toContain('Form refused');
		expect(html).toContain('sent from https://evil.example');
	});
});
