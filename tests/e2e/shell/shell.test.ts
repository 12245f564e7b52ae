import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { and, count, inArray, isNull } from 'drizzle-orm';
import { appUrl, openBrowser, screenshot, signIn } from '../../support/browser';
import { testDb } from '../../support/env';
import { parts } from '../../../src/lib/server/db/schema';
import { demoParts } from '../../../seed/demo-data';

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
		expect(new URL(page.url()).pathname).toBe('/signin');
		await expect(page.locator('h1').textContent()).resolves.toContain('Sign in');
	});

	it('shows the overview with the demo numbers and the bundled Lato font after sign-in', async () => {
		await signIn(page, 'engineer@tarnwell.example');
		expect(new URL(page.url()).pathname).toBe('/');
		const summary = await page.locator('[data-testid=summary]').innerText();
		// All 90 demo parts are in the catalogue, and the page shows the live count of unarchived parts,
		// which equals 90 only if every earlier test file archived the parts it made: read it, so that
		// one file's leftover does not fail this test too.
		const seeded = demoParts().map((p) => p.sku);
		expect(seeded).toHaveLength(90);
		const [demo] = await db.select({ n: count() }).from(parts).where(and(isNull(parts.archivedAt), inArray(parts.sku, seeded)));
		expect(demo.n).toBe(90);
		const [live] = await db.select({ n: count() }).from(parts).where(isNull(parts.archivedAt));
		expect(summary).toMatch(new RegExp(`Parts in the catalogue\\s+${live.n}\\b`, 'i'));
		const font = await page.evaluate(() => getComputedStyle(document.body).fontFamily);
		expect(font).toContain('Lato');
		const loaded = await page.evaluate(async () => {
			await document.fonts.ready;
			return document.fonts.check('16px Lato');
		});
		expect(loaded).toBe(true);
		await screenshot(page, 'overview-engineer');
	});

	it('answers an unknown address with the error page', async () => {
		const res = await page.goto(appUrl('/no-such-page'));
		expect(res?.status()).toBe(404);
		await expect(page.locator('[data-testid=error-page]').innerText()).resolves.toContain('Nothing here');
	});

	it('loads nothing from outside the app', async () => {
		const external: string[] = [];
		page.on('request', (r) => {
			const u = new URL(r.url());
			if (u.origin !== new URL(appUrl('/')).origin && u.protocol !== 'data:') external.push(r.url());
		});
		await page.goto(appUrl('/'));
		await page.waitForLoadState('networkidle');
		expect(external).toEqual([]);
	});
});
