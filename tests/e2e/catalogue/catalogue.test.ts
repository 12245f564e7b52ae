import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import Papa from 'papaparse';
import type { Page } from 'playwright-core';
import { appUrl, openBrowser, screenshot, signIn } from '../../support/browser';

describe('catalogue and stock in Chromium (stockroom)', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	const sku = `E2E-PC-${Date.now().toString(36).toUpperCase()}`;
	let partUrl = '';

	beforeAll(async () => {
		browser = await openBrowser();
		page = browser.page;
		await signIn(page, 'stockroom@tarnwell.example');
	});
	afterAll(async () => {
		// Archive the part again so the demo's catalogue count stays as seeded for other tests.
		if (partUrl) {
			await page.goto(partUrl);
			const restore = page.locator('form[action="?/archive"] button');
			if (await restore.count()) await Promise.all([page.waitForResponse((r) => r.url().includes('archive')), restore.click()]);
		}
		await browser?.close();
	});

	it('shows the catalogue with the demo parts and sorts by EFL on the server', async () => {
		await page.goto(appUrl('/parts'));
		await page.waitForLoadState('networkidle');
		await expect(page.locator('[data-testid=parts-total]').innerText()).resolves.toMatch(/^90 parts/);
		await screenshot(page, 'catalogue-list');
		await Promise.all([page.waitForResponse((r) => r.url().includes('/api/v1/parts') && r.url().includes('sort=eflMm')), page.click('button[data-sort=eflMm]')]);
		expect(new URL(page.url()).searchParams.get('sort')).toBe('eflMm');
		expect(new URL(page.url()).searchParams.get('order')).toBeNull(); // first click sorts ascending
		const efls = await page.locator('[data-testid=parts-table] tbody tr td:nth-child(4)').allInnerTexts();
		const values = efls.map((t) => parseFloat(t)).filter((x) => Number.isFinite(x));
		expect(values.length).toBeGreaterThan(10);
		expect([...values].sort((a, b) => a - b)).toEqual(values);
	});

	it('names kinds for people, on one line, lists every glass of a doublet, and still filters by kind', async () => {
		await page.goto(appUrl('/parts?kind=achromatic-doublet'));
		const kinds = await page.locator('[data-testid=parts-table] tbody tr td:nth-child(3)').allInnerTexts();
		expect(kinds.length).toBeGreaterThan(5);
		expect(new Set(kinds)).toEqual(new Set(['Achromatic doublet']));
		// On one line: the cell's content is less than two lines high.
		const kindCell = page.locator('[data-testid=parts-table] tbody tr:first-child td:nth-child(3)');
		const lineHeight = await kindCell.evaluate((td) => parseFloat(getComputedStyle(td).lineHeight));
		const padding = await kindCell.evaluate((td) => parseFloat(getComputedStyle(td).paddingTop) + parseFloat(getComputedStyle(td).paddingBottom));
		expect(await kindCell.evaluate((td) => td.scrollHeight)).toBeLessThan(padding + 2 * lineHeight);
		// The demo doublets are crown 517642 cemented to flint 620364 (seed/demo-data.ts).
		const glasses = await page.locator('[data-testid=parts-table] tbody tr td:nth-child(6)').allInnerTexts();
		expect(new Set(glasses)).toEqual(new Set(['517642 + 620364']));
		await expect(page.locator('[data-testid=parts-table] th:nth-child(6)').innerText()).resolves.toMatch(/glasses/i);
		// The filter menu shows the same labels and keeps the codes as values.
		await expect(page.locator('#f-kind option[value=plano-convex]').innerText()).resolves.toBe('Plano-convex');
		await Promise.all([
			page.waitForResponse((r) => r.url().includes('/api/v1/parts') && r.url().includes('kind=plano-convex')),
			page.selectOption('#f-kind', 'plano-convex')
		]);
		await page.waitForFunction(() => !document.querySelector('[aria-busy=true]'));
		const after = await page.locator('[data-testid=parts-table] tbody tr td:nth-child(3)').allInnerTexts();
		expect(new Set(after)).toEqual(new Set(['Plano-convex']));
	});

	it('downloads the current view as CSV, in the importer’s format', async () => {
		await page.goto(appUrl('/parts?kind=biconvex&sort=eflMm'));
		const href = (await page.locator('[data-testid=export-csv]').getAttribute('href'))!;
		expect(href).toMatch(/^\/api\/v1\/parts\/export\.csv\?/);
		expect(new URLSearchParams(href.split('?')[1]).get('kind')).toBe('biconvex');
		// The same session downloads it (the API needs a signed-in user).
		const res = await page.request.get(appUrl(href));
		expect(res.status()).toBe(200);
		expect(res.headers()['content-type']).toBe('text/csv; charset=utf-8');
		const [head, ...rows] = Papa.parse<string[]>((await res.text()).replace(/^\uFEFF/, ''), { skipEmptyLines: true }).data;
		const kindAt = head.indexOf('kind');
		expect(head[1]).toBe('sku');
		expect(rows.length).toBeGreaterThan(3);
		expect(new Set(rows.map((r) => r[kindAt]))).toEqual(new Set(['biconvex']));
	});

	it('downloads the stock of the chosen location as CSV', async () => {
		await page.goto(appUrl('/stock'));
		await expect(page.locator('[data-testid=stock-export-csv]').getAttribute('href')).resolves.toBe('/api/v1/stock/export.csv');
		const first = await page.locator('#loc option').nth(1).getAttribute('value');
		await page.goto(appUrl(`/stock?locationId=${first}`));
		const href = (await page.locator('[data-testid=stock-export-csv]').getAttribute('href'))!;
		expect(href).toBe(`/api/v1/stock/export.csv?locationId=${first}`);
		const res = await page.request.get(appUrl(href));
		expect(res.status()).toBe(200);
		const [head, ...rows] = Papa.parse<string[]>((await res.text()).replace(/^\uFEFF/, ''), { skipEmptyLines: true }).data;
		expect(head.slice(0, 3)).toEqual(['locationCode', 'locationName', 'sku']);
		expect(rows.length).toBeGreaterThan(0);
		expect(new Set(rows.map((r) => r[0])).size).toBe(1);
	});

	it('lines the stock tables up column by column, drawer after drawer', async () => {
		await page.goto(appUrl('/stock'));
		const lefts = await page.locator('[data-testid=stock-table]').evaluateAll((tables) =>
			tables.map((t) => [...t.querySelectorAll('thead th')].map((th) => Math.round(th.getBoundingClientRect().left)))
		);
		expect(lefts.length).toBeGreaterThan(3);
		for (const l of lefts) expect(l).toEqual(lefts[0]);
	});

	it('creates a part through the form with a kind template and a field message on bad input', async () => {
		await page.goto(appUrl('/parts/new'));
		await page.waitForLoadState('networkidle'); // hydrated: typed text is not reset
		await page.fill('#sku', sku);
		await page.fill('#name', 'E2E plano-convex f 123');
		await page.selectOption('#kind', 'plano-convex');
		await page.fill('#diameterMm', '25.4');
		await page.fill('#eflMm', '123');
		await page.click('button:has-text("Fill for plano-convex")');
		await expect(page.locator('[data-testid=surface-editor] tbody tr').count()).resolves.toBe(2);
		await expect(page.locator('[data-testid=lens-profile]').count()).resolves.toBe(1);
		// A radius that cannot span the diameter is refused at its field, and the typed values stay.
		const r1 = page.locator('input[name="surfaces.0.radiusMm"]');
		const good = await r1.inputValue();
		await r1.fill('5');
		await page.click('button:has-text("Create part")');
		await page.locator('.field-error').first().waitFor();
		await expect(page.locator('.field-error').allInnerTexts()).resolves.toContain('A sphere of radius 5 mm cannot span a 25.4 mm diameter.');
		expect(await page.inputValue('#sku')).toBe(sku);
		await screenshot(page, 'part-form-error');
		await r1.fill(good);
		await Promise.all([page.waitForURL(/\/parts\/\d+$/), page.click('button:has-text("Create part")')]);
		partUrl = page.url();
		await expect(page.locator('h1').innerText()).resolves.toContain(sku);
		// f = R/(n − 1) for the template's R = (n − 1)·123 mm: the computed EFL is 123 mm at nd, close at 587.6 nm.
		const efl = parseFloat(await page.locator('[data-testid=efl]').innerText());
		expect(efl).toBeGreaterThan(122.5);
		expect(efl).toBeLessThan(123.5);
		await expect(page.locator('[data-testid=abcd]').count()).resolves.toBe(1);
		// Nothing on the shelf yet: the stock operations open on receive.
		await expect(page.locator('[data-testid=stock-totals]').innerText()).resolves.toMatch(/^0 usable · 0 available/);
		await expect(page.locator('button[role=tab][aria-selected=true]').innerText()).resolves.toBe('receive');
		// The lens drawing fills its box's height and sits in the middle of it.
		const fig = (await page.locator('[data-testid=lens-figure]').boundingBox())!;
		const svg = (await page.locator('[data-testid=lens-figure] [data-testid=lens-profile]').boundingBox())!;
		expect(svg.height).toBeGreaterThan(180);
		expect(Math.abs(svg.x + svg.width / 2 - (fig.x + fig.width / 2))).toBeLessThan(2);
	});

	it('receives stock into a drawer and shows it with its ledger row', async () => {
		await page.click('button[role=tab]:has-text("receive")');
		const form = page.locator('[data-testid=stock-form-receive]');
		await form.locator('input[name=quantity]').fill('4');
		await form.locator('select[name=locationId]').selectOption({ index: 1 });
		await form.locator('input[name=note]').fill('E2E delivery');
		await Promise.all([page.waitForResponse((r) => r.url().includes('receive')), form.locator('button:has-text("Receive")').click()]);
		await page.locator('[data-testid=stock-totals]', { hasText: '4 usable · 4 available' }).waitFor();
		await expect(page.locator('[data-testid=ledger]').innerText()).resolves.toContain('E2E delivery');
		// Dates read the same on every page: "2 Dec 2026, 04:46".
		await expect(page.locator('[data-testid=ledger] tbody tr:first-child td:first-child').innerText()).resolves.toMatch(/^\d{1,2} [A-Z][a-z]{2} \d{4}, \d{2}:\d{2}$/);
		// Issuing more than is there is refused with a clear message.
		await page.click('button[role=tab]:has-text("issue")');
		const issue = page.locator('[data-testid=stock-form-issue]');
		await issue.locator('input[name=quantity]').fill('9');
		await issue.locator('select[name=locationId]').selectOption({ index: 1 });
		await Promise.all([page.waitForResponse((r) => r.url().includes('issue')), issue.locator('button:has-text("Issue")').click()]);
		await issue.locator('.field-error', { hasText: 'Not enough' }).waitFor();
		await screenshot(page, 'part-page');
	});

	it('finds the new part in the table by an EFL filter, and the link reproduces the view', async () => {
		await page.goto(appUrl('/parts'));
		await page.waitForLoadState('networkidle');
		await page.fill('input[name=eflMin]', '122.5');
		await Promise.all([
			page.waitForResponse((r) => r.url().includes('/api/v1/parts') && r.url().includes('eflMax=123.5')),
			page.fill('input[name=eflMax]', '123.5')
		]);
		await page.locator(`[data-testid=parts-table] a:has-text("${sku}")`).waitFor();
		const link = page.url();
		expect(new URL(link).searchParams.get('eflMin')).toBe('122.5');
		await page.goto(link);
		await expect(page.locator(`[data-testid=parts-table] a:has-text("${sku}")`).count()).resolves.toBe(1);
		const row = page.locator('[data-testid=parts-table] tbody tr', { hasText: sku });
		await expect(row.innerText()).resolves.toMatch(/\b4\s+4\b/);
		await screenshot(page, 'catalogue-efl-filter');
	});
});
