import { afterAll, beforeAll, describe, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { inArray, like } from 'drizzle-orm';
import type { Page } from 'playwright-core';
import { appUrl, expect, openBrowser, screenshot, signIn } from '../../support/browser';
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
		await page.getByLabel('CSV file', { exact: true }).setInputFiles(file);
		await page.getByLabel('Supplier of this list', { exact: true }).selectOption({ label: 'Kestrelmoor Optics' });
		await screenshot(page, 'imports-new');
		await page.getByRole('button', { name: 'Upload and map columns' }).click();
		await expect(page).toHaveURL(/\/imports\/\d+$/);
		const importPath = new URL(page.url()).pathname;

		// Suggested mapping from the header names, inch unit from "Dia (in)".
		await expect(page.getByLabel(/^SKU$/)).toHaveValue('SKU');
		await expect(page.getByLabel(/^Diameter\b/)).toHaveValue('Dia (in)');
		await expect(page.getByLabel(/^Unit of Diameter\b/)).toHaveValue('in');
		await expect(page.getByLabel(/^Radius surface 1$/)).toHaveValue('R1');
		await screenshot(page, 'imports-mapping');

		await page.getByRole('button', { name: /^Check every row/ }).click();
		await expect(page.getByTestId('import-summary')).toBeVisible({ timeout: 60_000 });
		await expect(page.getByTestId('count-created')).toHaveText('6000');
		await expect(page.getByTestId('count-rejected')).toHaveText('0');
		await screenshot(page, 'imports-checked');

		await page.getByRole('button', { name: 'Write 6000 parts to the catalogue' }).click();
		// The progress bar while it writes, or straight the end when the writing was quicker than the page.
		const progress = page.getByRole('progressbar', { name: 'Rows handled' });
		const done = page.getByTestId('import-status').filter({ hasText: 'In the catalogue' });
		await expect(progress.or(done)).toBeVisible({ timeout: 20_000 });
		await screenshot(page, 'imports-progress');
		// The page survives a reload while it runs (or after it finished).
		await page.reload();
		await expect(done).toBeVisible({ timeout: 60_000 });
		await expect(page.getByTestId('count-created')).toHaveText('6000');
		await screenshot(page, 'imports-committed');

		const stored = await db.select({ d: t.parts.diameterMm }).from(t.parts).where(like(t.parts.sku, `${tag}-%`));
		expect(stored).toHaveLength(6000);
		expect(stored.every((s) => Math.abs(s.d - 25.4) < 1e-12)).toBe(true);

		await page.goto(appUrl('/imports'));
		// this import's row: its file name links to its page, and it is in the catalogue
		const row = page.getByTestId('imports-table').getByRole('row').filter({ has: page.locator(`a[href="${importPath}"]`) });
		await expect(row.getByRole('link', { name: 'kestrelmoor-list.csv' })).toBeVisible();
		await expect(row.getByTestId('import-status')).toHaveText('In the catalogue');
		await screenshot(page, 'imports-history');
	});
});
