import { afterAll, beforeAll, describe, it } from 'vitest';
import type { Page } from 'playwright-core';
import { count, desc, eq, inArray, isNull } from 'drizzle-orm';
import { appUrl, expect, openBrowser, screenshot, signIn } from '../../support/browser';
import { testDb } from '../../support/env';
import { Fixtures } from '../../support/fixtures';
import { parts, purchaseRequests, setups, users } from '../../../src/lib/server/db/schema';

const { db, pool } = testDb();

describe('app shell in Chromium', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	beforeAll(async () => {
		browser = await openBrowser();
		page = browser.page;
	});
	afterAll(async () => {
		await browser?.close();
		await pool.end();
	});

	it('sends an anonymous visitor to the sign-in page', async () => {
		await page.goto(appUrl('/'));
		await expect(page).toHaveURL(/\/signin(\?|$)/);
		await expect(page.getByRole('heading', { level: 1 })).toContainText('Sign in');
	});

	it('shows the overview with the live part count and the bundled Lato font after sign-in', async () => {
		await signIn(page, 'engineer@tarnwell.example');
		await expect(page).toHaveURL(appUrl('/'));
		const summary = page.getByTestId('summary');
		// The count of unarchived parts, as the database has it now (whatever other files left behind) ...
		const live = async () => (await db.select({ n: count() }).from(parts).where(isNull(parts.archivedAt)))[0].n;
		const before = await live();
		await expect(summary).toHaveText(new RegExp(`Parts in the catalogue\\s+${before}\\b`, 'i'));
		// ... and it follows a part this file adds and archives again.
		const fx = await Fixtures.open('E2E-SHELL');
		try {
			await fx.part('ONE');
			expect(await live()).toBe(before + 1);
			await page.reload();
			await expect(summary).toHaveText(new RegExp(`Parts in the catalogue\\s+${before + 1}\\b`, 'i'));
		} finally {
			await fx.cleanup();
		}
		await page.reload();
		await expect(summary).toHaveText(new RegExp(`Parts in the catalogue\\s+${before}\\b`, 'i'));
		const font = await page.evaluate(() => getComputedStyle(document.body).fontFamily);
		expect(font).toContain('Lato');
		const loaded = await page.evaluate(async () => {
			await document.fonts.ready;
			return document.fonts.check('16px Lato');
		});
		expect(loaded).toBe(true);
		await screenshot(page, 'overview-engineer');
	});

	it('shows the engineer their own saved setups on the overview, and no purchasing numbers', async () => {
		// Save one setup through the API (solve, then save the first solution), as the build page does.
		const origin = new URL(appUrl('/')).origin;
		const post = (path: string, data: unknown) => page.request.post(appUrl(path), { data, headers: { origin } });
		const solved = await (await post('/api/v1/solve', { maxElements: 1, trackMm: 1250, magnification: -0.25, objectNA: 0.005, objectHeightMm: 1, limit: 1 })).json();
		expect(solved.solutions.length).toBe(1);
		const s = solved.solutions[0];
		const choice = {
			elements: s.elements.map((e: { partId: number; reversed: boolean }) => ({ partId: e.partId, reversed: e.reversed })),
			objectDistanceMm: s.objectDistanceMm,
			gapsMm: s.gapsMm,
			backDistanceMm: s.backDistanceMm
		};
		const name = `E2E overview relay ${Date.now().toString(36)}`;
		const saved = await post('/api/v1/setups', { name, query: solved.request, choice });
		expect(saved.status()).toBe(201);
		const setup = (await saved.json()) as { id: number };
		try {
			await page.goto(appUrl('/'));
			const section = page.getByTestId('overview-setups');
			await expect(section.getByRole('heading', { level: 2 })).toHaveText('Your saved setups');
			await expect(section.getByRole('link', { name, exact: true })).toHaveAttribute('href', `/build/${setup.id}`);
			const [me] = await db.select({ id: users.id }).from(users).where(eq(users.email, 'engineer@tarnwell.example'));
			const mine = await db.select({ id: setups.id }).from(setups).where(eq(setups.userId, me.id)).orderBy(desc(setups.id)).limit(5);
			const links = await section.locator('a[href^="/build/"]').evaluateAll((as) => as.map((a) => a.getAttribute('href')));
			expect(links.filter((h) => /^\/build\/\d+$/.test(h ?? ''))).toEqual(mine.map((m) => `/build/${m.id}`));
			await expect(page.getByTestId('overview-purchasing')).toHaveCount(0);
			await expect(page.locator('.caution')).toContainText('laser safety officer');
		} finally {
			await db.delete(setups).where(eq(setups.id, setup.id));
		}
	});

	it('answers an unknown address with the error page and a helpful sentence', async () => {
		const res = await page.goto(appUrl('/no-such-page'));
		expect(res?.status()).toBe(404);
		const text = page.getByTestId('error-page');
		await expect(text).toContainText('Nothing here');
		await expect(text).toContainText('There is no page at /no-such-page.');
		await expect(text).not.toContainText('Not Found');
	});

	it('loads nothing from outside the app, fonts only as files, and logs no console errors (CSP included)', async () => {
		const origin = new URL(appUrl('/')).origin;
		const external: string[] = [];
		const inlineFonts: string[] = [];
		const fontFiles: string[] = [];
		const consoleErrors: string[] = [];
		page.on('request', (r) => {
			const u = new URL(r.url());
			if (u.protocol === 'data:') {
				if (r.url().startsWith('data:font/') || r.resourceType() === 'font') inlineFonts.push(r.url().slice(0, 40));
			} else if (u.origin !== origin) external.push(r.url());
			else if (r.resourceType() === 'font') fontFiles.push(u.pathname);
		});
		page.on('console', (m) => {
			if (m.type() === 'error') consoleErrors.push(`${page.url()}: ${m.text().slice(0, 160)}`);
		});
		page.on('pageerror', (e) => consoleErrors.push(`${page.url()}: ${e.message}`));
		for (const path of ['/', '/parts', '/stock']) {
			await page.goto(appUrl(path));
			// every font the page uses has loaded (or failed, which the console shows)
			await expect.poll(() => page.evaluate(() => document.fonts.status)).toBe('loaded');
			await page.evaluate(() => document.fonts.ready.then(() => undefined));
		}
		expect(external).toEqual([]);
		expect(inlineFonts).toEqual([]);
		expect(fontFiles.some((f) => /\.woff2?$/.test(f))).toBe(true);
		// A font refused by the Content-Security-Policy shows up here as "Loading the font ... violates ...".
		expect(consoleErrors).toEqual([]);
	});

	it('shows the purchaser the flagged parts and open requests, the same count the reorder board shows', async () => {
		const other = await openBrowser();
		try {
			await signIn(other.page, 'purchaser@tarnwell.example');
			await other.page.goto(appUrl('/'));
			const flaggedLink = other.page.getByTestId('overview-flagged');
			await expect(flaggedLink).toHaveText(/^\d+$/);
			const flagged = Number(await flaggedLink.innerText());
			const open = await db.select({ n: count() }).from(purchaseRequests).where(inArray(purchaseRequests.status, ['draft', 'requested', 'ordered', 'partly-received']));
			await expect(other.page.getByTestId('overview-open-requests')).toHaveText(String(open[0].n));
			await expect(other.page.getByTestId('overview-setups')).toHaveCount(0);
			await flaggedLink.click();
			await expect(other.page).toHaveURL(/\/reorder\?show=flagged$/);
			await expect(other.page.getByLabel('Show', { exact: true })).toHaveValue('flagged');
			await expect(other.page.getByTestId('reorder-row')).toHaveCount(flagged);
		} finally {
			await other.close();
		}
	});
});
