/**
 * "What purchase would help?" on Build from stock in Chromium: a question nothing on the shelf
 * answers offers the catalogue-wide search; the engineer sees the single purchase (SKU, units,
 * price, supplier, lead time, the setup it gives) and is told a purchaser places the Request;
 * an administrator (a purchaser too) can create the draft Request from there. A saved setup whose
 * part someone else holds shows which part is short and the same search.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { appUrl, openBrowser, screenshot, signIn } from '../../support/browser';

// One part, m = −0.5 over a 4.5 m track wants f ≈ 1000 mm (track = 4.5 f for a thin lens,
// from memory: s = 3f, s' = 1.5f); the demo stock has no such part on the shelf.
const QUESTION = '/build?track=4500+mm&magnification=-0.5&na=0.003&objectHeight=1+mm&maxParts=1';

describe('What purchase would help? on /build', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	beforeAll(async () => {
		browser = await openBrowser();
		page = browser.page;
	});
	afterAll(async () => browser?.close());

	it('an engineer gets the best single purchase for a question the shelf cannot answer', async () => {
		await signIn(page, 'engineer@tarnwell.example');
		await page.goto(appUrl(QUESTION));
		await page.waitForSelector('[data-testid=unlock-offer]', { timeout: 30_000 });
		await expect(page.locator('#results-h').innerText()).resolves.toContain('No setup found');
		// said once, in the results, not again in the offer
		await expect(page.locator('[data-testid=no-answer]').innerText()).resolves.toContain('Nothing on the shelf');
		expect(await page.locator('[data-testid=unlock-reason]').count()).toBe(0);
		expect((await page.locator('main').innerText()).match(/Nothing on the shelf/g)).toHaveLength(1);
		await expect(page.locator('[data-testid=laser-caution]').isVisible()).resolves.toBe(true);
		await page.click('[data-testid=unlock-button]');
		await page.waitForSelector('[data-testid=purchase-suggestion]', { timeout: 30_000 });
		const sku = await page.locator('[data-testid=suggested-sku]').innerText();
		expect(sku).toMatch(/^TW-[A-Z]\d[A-Z]\d-\d\d$/);
		expect(Number(await page.locator('[data-testid=suggested-quantity]').innerText())).toBeGreaterThanOrEqual(1);
		await expect(page.locator('[data-testid=suggested-lead-time]').innerText()).resolves.toMatch(/\d+ days|not recorded/);
		const setup = await page.locator('[data-testid=suggested-setup]').innerText();
		expect(setup).toContain(sku);
		expect(setup).toMatch(/Magnification\s+-0\.5/);
		await expect(page.locator('[data-testid=suggested-ratio]').innerText()).resolves.toMatch(/× the Airy radius/);
		// engineers read the suggestion; a purchaser places the Request
		await expect(page.locator('[data-testid=ask-purchaser]').innerText()).resolves.toContain('Purchasers place Requests');
		expect(await page.locator('[data-testid=request-form]').count()).toBe(0);
		await expect(page.locator('[data-testid=laser-caution]').isVisible()).resolves.toBe(true);
		await screenshot(page, 'build-purchase-suggestion');
	});

	it('an administrator can turn it into a draft Request', async () => {
		await page.context().clearCookies();
		await signIn(page, 'admin@tarnwell.example');
		await page.goto(appUrl(QUESTION));
		await page.waitForSelector('[data-testid=unlock-button]', { timeout: 30_000 });
		await page.click('[data-testid=unlock-button]');
		await page.waitForSelector('[data-testid=request-form]', { timeout: 30_000 });
		const sku = await page.locator('[data-testid=suggested-sku]').innerText();
		await Promise.all([page.waitForURL(/\/requests\/\d+$/), page.click('[data-testid=request-form] button')]);
		const body = await page.locator('main').innerText();
		expect(body).toContain(sku);
		expect(body).toMatch(/Build from stock/);
		await screenshot(page, 'build-purchase-request');
	});

	it('a saved setup short of a part shows the short part and the suggestion', async () => {
		await page.context().clearCookies();
		await signIn(page, 'engineer2@tarnwell.example');
		const origin = new URL(appUrl('/')).origin;
		const post = (path: string, data: unknown) => page.request.post(appUrl(path), { data, headers: { origin } });
		// one part, m = −0.25 over 1250 mm: f ≈ 200 mm, of which the shelf has several
		const solved = await (await post('/api/v1/solve', { maxElements: 1, trackMm: 1250, magnification: -0.25, objectNA: 0.005, objectHeightMm: 1, limit: 1 })).json();
		expect(solved.solutions.length).toBe(1);
		const s = solved.solutions[0];
		const choice = { elements: s.elements.map((e: { partId: number; reversed: boolean }) => ({ partId: e.partId, reversed: e.reversed })), objectDistanceMm: s.objectDistanceMm, gapsMm: s.gapsMm, backDistanceMm: s.backDistanceMm };
		const setup = await (await post('/api/v1/setups', { name: 'E2E camera relay waiting for parts', query: solved.request, choice })).json();
		const part = await (await page.request.get(appUrl(`/api/v1/parts/${s.elements[0].partId}`))).json();
		expect(part.available).toBeGreaterThan(0);
		// a plain reservation (not the setup's) holds every available unit for a day
		const held = await post('/api/v1/reservations', { partId: part.id, quantity: part.available, until: new Date(Date.now() + 86_400_000).toISOString(), note: 'e2e: hold for another bench' });
		expect(held.status(), await held.text()).toBe(201);
		const reservation = await held.json();
		try {
			await page.goto(appUrl(`/build/${setup.id}`));
			await page.waitForSelector('[data-testid=setup-short]');
			const row = await page.locator('[data-testid=short-row]').innerText();
			expect(row).toContain(part.sku);
			await expect(page.locator('[data-testid=laser-caution]').isVisible()).resolves.toBe(true);
			await page.click('[data-testid=setup-short] [data-testid=unlock-button]');
			await page.waitForSelector('[data-testid=purchase-suggestion]', { timeout: 30_000 });
			await expect(page.locator('[data-testid=purchase-suggestion]').innerText()).resolves.toMatch(/Buy \d+ × TW-|No single purchase/);
			await screenshot(page, 'setup-short-suggestion');
		} finally {
			await page.request.delete(appUrl(`/api/v1/reservations/${reservation.id}`), { headers: { origin } });
		}
	});
});
