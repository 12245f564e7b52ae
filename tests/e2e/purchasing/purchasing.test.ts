import fs from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray } from 'drizzle-orm';
import type { Page } from 'playwright-core';
import { appUrl, openBrowser, screenshot, signIn } from '../../support/browser';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as parts from '../../../src/lib/server/catalogue/parts';
import * as ops from '../../../src/lib/server/stock/operations';

describe('purchasing in Chromium', () => {
	const { db, pool } = testDb();
	const sku = `E2E-PUR-${Date.now().toString(36).toUpperCase()}`;
	let partId = 0;
	let locationCode = '';
	let locationId = 0;
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;

	beforeAll(async () => {
		const [stockroom] = await db.select().from(t.users).where(eq(t.users.email, 'stockroom@tarnwell.example'));
		const [loc] = await db.select().from(t.locations).orderBy(t.locations.code).limit(1);
		locationCode = loc.code;
		locationId = loc.id;
		({ id: partId } = await parts.createPart(
			db,
			{ sku, name: 'Browser test biconvex 25 mm', kind: 'other', diameterMm: 25, eflMm: 75, reorderPoint: 2, reorderQuantity: 4, supplier: 'Quillmere Glassworks', unitPrice: 29.5, leadTimeDays: 9 },
			{ id: stockroom.id }
		));
		await ops.receive(db, { partId, quantity: 1, locationId: loc.id }, { id: stockroom.id }); // 1 ≤ reorder point 2: flagged
		browser = await openBrowser();
		page = browser.page;
	});
	afterAll(async () => {
		await browser?.close();
		if (partId) await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, [partId]));
		await pool.end();
	});

	it('a purchaser creates a request from the board', async () => {
		await signIn(page, 'purchaser@tarnwell.example');
		await page.click('nav[aria-label=Main] >> text=Reorder board');
		await page.waitForURL((u) => u.pathname === '/reorder');
		await screenshot(page, 'reorder-board');
		const row = page.locator(`[data-testid=reorder-row][data-sku="${sku}"]`);
		await expect(row.innerText()).resolves.toContain('at or below reorder point');
		// sort by "Setups unlocked" and filter by SKU: the table answers in place
		await page.click('th >> text=Setups unlocked');
		await page.fill('#board-search', sku);
		await expect(page.locator('[data-testid=reorder-row]').count()).resolves.toBe(1);
		await row.locator('input[type=checkbox]').check();
		await row.locator(`#qty-${partId}`).fill('5');
		await screenshot(page, 'reorder-board-selected');
		// "Export selection as CSV" downloads the file and logs no console error (issue 16)
		const consoleErrors: string[] = [];
		const onConsole = (m: { type: () => string; text: () => string }) => {
			if (m.type() === 'error') consoleErrors.push(m.text());
		};
		page.on('console', onConsole);
		const [download] = await Promise.all([page.waitForEvent('download'), page.click('button:has-text("Export selection as CSV")')]);
		expect(download.suggestedFilename()).toMatch(/\.csv$/);
		const csvText = fs.readFileSync((await download.path())!, 'utf8');
		expect(csvText).toContain(`${sku},`);
		expect(csvText).toMatch(/,5,29\.50,EUR,/);
		await page.waitForTimeout(300);
		page.off('console', onConsole);
		expect(consoleErrors).toEqual([]);
		expect(new URL(page.url()).pathname).toBe('/reorder');
		await Promise.all([page.waitForURL((u) => u.pathname === '/requests'), page.click('button:has-text("Create 1 request")')]);
		const req = page.locator(`[data-testid=request-row][data-sku="${sku}"]`);
		await expect(req.getAttribute('data-status')).resolves.toBe('requested');
		await screenshot(page, 'requests-created');
	});

	it('marks it ordered and received, which puts the units into stock', async () => {
		await page.locator(`[data-testid=request-row][data-sku="${sku}"] a`).first().click();
		await page.waitForURL((u) => /^\/requests\/\d+$/.test(u.pathname));
		await page.fill('#step-ref', 'QG-20261202');
		await page.click('button:has-text("Mark ordered")');
		await page.locator('[data-testid=request-status]:has-text("Ordered")').waitFor();
		// receiving preselects the part's drawer (issue 16)
		await expect(page.inputValue('#rcv-loc')).resolves.toBe(String(locationId));
		await screenshot(page, 'request-ordered');
		await page.click('button:has-text("Receive into stock")');
		await page.locator('[data-testid=request-status]:has-text("Received")').waitFor();
		await expect(page.locator('[data-testid=request-received]').innerText()).resolves.toBe('5');
		await expect(page.locator('[data-testid=request-history]').innerText()).resolves.toMatch(new RegExp(`Ordered → Received[\\s\\S]*ledger movement \\d+ into ${locationCode}`));
		await screenshot(page, 'request-received');
		const moves = await db.select().from(t.movements).where(and(eq(t.movements.partId, partId), eq(t.movements.kind, 'receive')));
		expect(moves.map((m) => m.quantity).sort()).toEqual([1, 5]);
	});

	it('changes the reorder point of the part from the board, which takes it off the board', async () => {
		await page.goto(appUrl('/reorder'));
		await page.fill('#settings-sku', sku);
		await Promise.all([page.waitForURL((u) => u.pathname === `/reorder/parts/${partId}`), page.click('button:has-text("Open")')]);
		await page.fill('#rs-reorderPoint', 'two');
		await page.click('button:has-text("Save reorder settings")');
		await page.locator('.field-error').first().waitFor();
		await expect(page.inputValue('#rs-reorderPoint')).resolves.toBe('two'); // the value typed is kept
		await page.fill('#rs-reorderPoint', '4');
		await page.fill('#rs-leadTimeDays', '15');
		await page.click('button:has-text("Save reorder settings")');
		await page.locator('[role=status]:has-text("Saved")').waitFor();
		await screenshot(page, 'reorder-settings');
		const [row] = await db.select().from(t.parts).where(eq(t.parts.id, partId));
		expect([row.reorderPoint, row.leadTimeDays]).toEqual([4, 15]);
		// 6 on hand now, above the new reorder point 4: no longer on the board
		await page.goto(appUrl('/reorder'));
		await expect(page.locator(`[data-testid=reorder-row][data-sku="${sku}"]`).count()).resolves.toBe(0);
	});
});
