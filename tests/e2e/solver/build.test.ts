/**
 * An engineer asks Build from stock a question in Chromium, sees the answers and the
 * to-scale diagram, saves a setup, reserves its parts and opens the build sheet.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { appUrl, openBrowser, screenshot, signIn } from '../../support/browser';

describe('Build from stock in the browser', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	beforeAll(async () => {
		browser = await openBrowser();
		page = browser.page;
		await signIn(page, 'engineer@tarnwell.example');
	});
	afterAll(async () => browser?.close());

	it('answers a question without a page reload and draws the selected setup', async () => {
		await page.goto(appUrl('/build'));
		await expect(page.locator('h1').textContent()).resolves.toContain('Build from stock');
		await expect(page.locator('[data-testid=laser-caution]').isVisible()).resolves.toBe(true);
		await page.evaluate(() => ((window as unknown as { marker: number }).marker = 42));
		await page.fill('input[name=track]', '350 mm');
		await page.fill('input[name=magnification]', '-0.5');
		await page.fill('input[name=objectHeight]', '2 mm');
		await page.fill('input[name=na]', '0.03');
		await page.click('[data-testid=solve-button]');
		await page.waitForSelector('[data-testid=solution-row]', { timeout: 30_000 });
		expect(new URL(page.url()).searchParams.get('track')).toBe('350 mm');
		// Same document: the answer came from the API, not a reload.
		expect(await page.evaluate(() => (window as unknown as { marker?: number }).marker)).toBe(42);
		expect(await page.locator('[data-testid=solution-row]').count()).toBeGreaterThan(0);
		const svg = page.locator('[data-testid=setup-layout]');
		await svg.waitFor();
		expect(await svg.locator('polyline[data-ray=marginal]').count()).toBeGreaterThanOrEqual(2);
		expect(await svg.locator('polyline[data-ray=principal]').count()).toBeGreaterThanOrEqual(1);
		expect(await svg.locator('.lens-profile path').count()).toBeGreaterThanOrEqual(1);
		await expect(page.locator('[data-testid=tolerance]').innerText()).resolves.toMatch(/moves \d+\.\d\d mm (toward|away from) the lens/);
		await screenshot(page, 'build-results');
	});

	it('reproduces the question from the link', async () => {
		const link = page.url();
		await page.goto(link);
		await page.waitForSelector('[data-testid=solution-row]', { timeout: 30_000 });
		expect(await page.inputValue('input[name=track]')).toBe('350 mm');
	});

	it('a search that runs long shows its progress and can be stopped from the page', async () => {
		// Hold the answer back for 4 s (the demo stock answers at once), so that the page shows the long-search view.
		await page.route('**/api/v1/solve', async (route) => {
			await new Promise((r) => setTimeout(r, 4000));
			await route.continue().catch(() => {});
		});
		try {
			await page.goto(appUrl('/build?track=360+mm&magnification=-0.5&na=0.02&objectHeight=1+mm'));
			await page.waitForSelector('[data-testid=stop-search]', { timeout: 10_000 });
			await expect(page.locator('[data-testid=search-progress] progress').getAttribute('max')).resolves.toBe('100');
			await expect(page.locator('[data-testid=search-progress]').innerText()).resolves.toContain('% searched');
			await screenshot(page, 'build-long-search');
			await page.click('[data-testid=stop-search]');
			await page.waitForSelector('[data-testid=search-stopped]');
			await expect(page.locator('[data-testid=search-progress]').count()).resolves.toBe(0);
			await expect(page.locator('[data-testid=solution-row]').count()).resolves.toBe(0);
		} finally {
			await page.unroute('**/api/v1/solve');
		}
	});

	it('shows field messages for a bad question', async () => {
		await page.goto(appUrl('/build?track=0&magnification=-0.5&na=0.03'));
		await page.waitForSelector('[data-field-error=track]');
		await expect(page.locator('[data-field-error=track]').innerText()).resolves.toContain('longer than 0');
		await page.goto(appUrl('/build?track=300&magnification=-0.5&na=1.5'));
		await page.waitForSelector('[data-field-error=na]');
		await screenshot(page, 'build-bad-question');
	});

	it('saves a setup, reserves it and opens the build sheet', async () => {
		await page.goto(appUrl('/build?track=450+mm&magnification=-0.5&na=0.01&objectHeight=1+mm&maxParts=1'));
		await page.waitForSelector('[data-testid=save-form]', { timeout: 30_000 });
		await page.fill('input[name=name]', 'E2E relay on bench 3');
		await Promise.all([page.waitForURL(/\/build\/\d+$/), page.click('[data-testid=save-button]')]);
		await expect(page.locator('h1').textContent()).resolves.toContain('E2E relay on bench 3');
		await page.locator('[data-testid=setup-layout]').waitFor();
		await screenshot(page, 'setup-page');
		await page.click('[data-testid=reserve-button]');
		await page.waitForSelector('[data-testid=reserve-ok], [data-testid=reserve-error]');
		await expect(page.locator('[data-testid=reserve-ok]').isVisible()).resolves.toBe(true);
		await page.waitForSelector('[data-testid=reservations] li');
		await Promise.all([page.waitForURL(/\/sheet$/), page.click('[data-testid=sheet-link]')]);
		const sheet = await page.locator('[data-testid=build-sheet]').innerText();
		expect(sheet).toMatch(/TW-/);
		expect(sheet).toMatch(/face toward the object|either way round/);
		expect(sheet).not.toMatch(/surface \d faces/);
		expect(sheet).toMatch(/Never look into the beam/);
		expect(sheet).toMatch(/A\d-D\d|B\d-D\d/);
		await page.emulateMedia({ media: 'print' });
		await screenshot(page, 'build-sheet-print');
		expect(await page.locator('header nav').isVisible()).toBe(false);
		await page.emulateMedia({ media: 'screen' });
	});
});
