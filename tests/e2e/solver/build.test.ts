/**
 * An engineer asks Build from stock a question in Chromium, sees the answers and the
 * to-scale diagram, saves a setup, reserves its parts and opens the build sheet.
 */
import { afterAll, beforeAll, describe, it } from 'vitest';
import type { Page } from 'playwright-core';
import { appUrl, expect, openBrowser, screenshot, signIn } from '../../support/browser';
import { releaseSetups, reserveAndOpenSheet } from '../../support/fixtures';

/** A field of the question form by its label (which names its unit). */
const field = (page: Page, label: string) => page.getByLabel(new RegExp(`^${label} \\(`));
/** The solver's answers may take a while on two shared cores. */
const SOLVED = { timeout: 30_000 };

describe('Build from stock in the browser', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	const savedSetups: number[] = [];
	beforeAll(async () => {
		browser = await openBrowser();
		page = browser.page;
		await signIn(page, 'engineer@tarnwell.example');
	});
	afterAll(async () => {
		// Release what the test reserved, so that later files find the stock free.
		if (page) await releaseSetups(page.request, savedSetups);
		await browser?.close();
	});

	it('answers a question without a page reload and draws the selected setup', async () => {
		await page.goto(appUrl('/build'));
		await expect(page.getByRole('heading', { level: 1 })).toContainText('Build from stock');
		await expect(page.getByTestId('laser-caution')).toBeVisible();
		await page.evaluate(() => ((window as unknown as { marker: number }).marker = 42));
		await field(page, 'Track').fill('350 mm');
		await field(page, 'Magnification').fill('-0.5');
		await field(page, 'Object height \\(half field\\)').fill('2 mm');
		await field(page, 'Object NA').fill('0.03');
		await page.getByRole('button', { name: 'Find setups' }).click();
		await expect(page.getByTestId('solution-row')).not.toHaveCount(0, SOLVED);
		await expect(page).toHaveURL(/track=350(\+|%20)mm/);
		// Same document: the answer came from the API, not a reload.
		expect(await page.evaluate(() => (window as unknown as { marker?: number }).marker)).toBe(42);
		const svg = page.getByTestId('setup-layout');
		await expect(svg).toBeVisible();
		await expect.poll(() => svg.locator('polyline[data-ray=marginal]').count()).toBeGreaterThanOrEqual(2);
		await expect(svg.locator('polyline[data-ray=principal]')).not.toHaveCount(0);
		await expect(svg.locator('.lens-profile path')).not.toHaveCount(0);
		await expect(page.getByTestId('tolerance')).toHaveText(/moves \d+\.\d\d mm (toward|away from) the lens/);
		await screenshot(page, 'build-results');
	});

	it('reproduces the question from the link', async () => {
		const link = page.url();
		await page.goto(link);
		await expect(page.getByTestId('solution-row')).not.toHaveCount(0, SOLVED);
		await expect(field(page, 'Track')).toHaveValue('350 mm');
	});

	it('a search that runs long shows its progress and can be stopped from the page', async () => {
		// Hold the answer back for 4 s at the network (the demo stock answers at once), so that the page shows the
		// long-search view: a slow server, not a wait in the test.
		await page.route('**/api/v1/solve', async (route) => {
			await new Promise((r) => setTimeout(r, 4000));
			await route.continue().catch(() => {});
		});
		try {
			await page.goto(appUrl('/build?track=360+mm&magnification=-0.5&na=0.02&objectHeight=1+mm'));
			const stop = page.getByRole('button', { name: 'Stop the search' });
			await expect(stop).toBeVisible();
			const progress = page.getByTestId('search-progress');
			await expect(progress.getByRole('progressbar')).toHaveAttribute('max', '100');
			await expect(progress).toContainText('% searched');
			await screenshot(page, 'build-long-search');
			await stop.click();
			await expect(page.getByTestId('search-stopped')).toBeVisible();
			await expect(progress).toHaveCount(0);
			await expect(page.getByTestId('solution-row')).toHaveCount(0);
		} finally {
			await page.unroute('**/api/v1/solve');
		}
	});

	it('shows field messages for a bad question', async () => {
		await page.goto(appUrl('/build?track=0&magnification=-0.5&na=0.03'));
		await expect(field(page, 'Track')).toHaveAttribute('aria-invalid', 'true');
		await expect(page.locator('[data-field-error=track]')).toContainText('longer than 0');
		await page.goto(appUrl('/build?track=300&magnification=-0.5&na=1.5'));
		await expect(field(page, 'Object NA')).toHaveAttribute('aria-invalid', 'true');
		await expect(field(page, 'Track')).not.toHaveAttribute('aria-invalid', 'true');
		await screenshot(page, 'build-bad-question');
	});

	it('saves a setup, reserves it and opens the build sheet', async () => {
		await page.goto(appUrl('/build?track=450+mm&magnification=-0.5&na=0.01&objectHeight=1+mm&maxParts=1'));
		await expect(page.getByTestId('save-form')).toBeVisible(SOLVED);
		const name = `E2E relay on bench 3 ${Date.now().toString(36)}`;
		await page.getByLabel('Setup name').fill(name);
		await page.getByRole('button', { name: 'Save as setup' }).click();
		await expect(page).toHaveURL(/\/build\/\d+$/);
		const setupId = Number(new URL(page.url()).pathname.split('/').pop());
		savedSetups.push(setupId);
		await expect(page.getByRole('heading', { level: 1 })).toContainText(name);
		await expect(page.getByTestId('setup-layout')).toBeVisible();
		await screenshot(page, 'setup-page');
		// reserved, and the sheet names every part of the setup and a drawer that holds it
		const sheet = await reserveAndOpenSheet(page, setupId);
		await expect(sheet).toContainText(/face toward the object|either way round/);
		await expect(sheet).not.toContainText(/surface \d faces/);
		await expect(sheet).toContainText(/Never look into the beam/);
		await page.emulateMedia({ media: 'print' });
		await screenshot(page, 'build-sheet-print');
		await expect(page.getByRole('banner').getByRole('navigation')).toBeHidden();
		await page.emulateMedia({ media: 'screen' });
	});
});
