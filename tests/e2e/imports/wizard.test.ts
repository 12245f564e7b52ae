import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { inArray, like } from 'drizzle-orm';
import type { Page } from 'playwright-core';
import { appUrl, openBrowser, screenshot, signIn } from '../../support/browser';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';

const tag = `E2E${Date.now().toString(36).toUpperCase()}`;
const { db, pool } = testDb();

describe('the import wizard in Chromium', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	let file = '';
	beforeAll(async () => {
		browser = await openBrowser();
		page = browser.page;
		// A supplier's list with its own header names, semicolons, decimal commas and inch diameters.
		const rows = Array.from({ length: 6000 }, (_, i) => `${tag}-${i};Wizard lens ${i};plano-convex;1;${(60 + (i % 50)).toFixed(1).replace('.', ',')};4;517642;KMW-${tag}-${i}`);
		file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'gc-e2e-')), 'kestrelmoor-list.csv');
		fs.writeFileSync(file, '\uFEFFSKU;Description;Type;Dia (in);R1;T1;Glass;Part No.\n' + rows.join('\n') + '\n');
	});
	afterAll(async () => {
		await browser?.close();
		const ids = (await db.select({ id: t.parts.id }).from(t.parts).where(like(t.parts.sku, `${tag}-%`))).map((r) => r.id);
		if (ids.length) {
			await db.delete(t.partSurfaces).where(inArray(t.partSurfaces.partId, ids));
			await db.delete(t.parts).where(inArray(t.parts.id, ids));
		}
		await pool.end();
	});

	it('uploads, maps, checks and commits a CSV with the progress bar shown', async () => {
		await signIn(page, 'stockroom@tarnwell.example');
		await page.goto(appUrl('/imports/new'));
		await page.setInputFiles('input[name=file]', file);
		await page.selectOption('select[name=supplierId]', { label: 'Kestrelmoor Optics' });
		await screenshot(page, 'imports-new');
		await Promise.all([page.waitForURL(/\/imports\/\d+$/), page.click('button:has-text("Upload and map columns")')]);

		// Suggested mapping from the header names, inch unit from "Dia (in)".
		await expect(page.locator('select[name="map.sku"]').inputValue()).resolves.toBe('SKU');
		await expect(page.locator('select[name="map.diameterMm"]').inputValue()).resolves.toBe('Dia (in)');
		await expect(page.locator('select[name="unit.diameterMm"]').inputValue()).resolves.toBe('in');
		await expect(page.locator('select[name="map.r1Mm"]').inputValue()).resolves.toBe('R1');
		await screenshot(page, 'imports-mapping');

		await page.click('button:has-text("Check every row")');
		await page.locator('[data-testid=import-summary]').waitFor({ timeout: 60_000 });
		await expect(page.locator('[data-testid=count-created]').innerText()).resolves.toBe('6000');
		await expect(page.locator('[data-testid=count-rejected]').innerText()).resolves.toBe('0');
		await screenshot(page, 'imports-checked');

		await page.click('button:has-text("Write 6000 parts")');
		await page.locator('[data-testid=import-progress] progress').waitFor({ timeout: 20_000 });
		await screenshot(page, 'imports-progress');
		// The page survives a reload while it runs (or after it finished).
		await page.reload();
		await page.locator('[data-testid=import-status]:has-text("In the catalogue")').waitFor({ timeout: 60_000 });
		await expect(page.locator('[data-testid=count-created]').innerText()).resolves.toBe('6000');
		await screenshot(page, 'imports-committed');

		const stored = await db.select({ d: t.parts.diameterMm }).from(t.parts).where(like(t.parts.sku, `${tag}-%`));
		expect(stored).toHaveLength(6000);
		expect(stored.every((s) => Math.abs(s.d - 25.4) < 1e-12)).toBe(true);

		await page.goto(appUrl('/imports'));
		await expect(page.locator('[data-testid=imports-table]').innerText()).resolves.toContain('kestrelmoor-list.csv');
		await screenshot(page, 'imports-history');
	});
});
