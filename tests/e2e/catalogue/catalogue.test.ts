import { afterAll, beforeAll, describe, it } from 'vitest';
import Papa from 'papaparse';
import type { Page } from 'playwright-core';
import { appUrl, columnTexts, expect, openBrowser, screenshot, signIn, tableRows } from '../../support/browser';
import { DOUBLET_SURFACES, Fixtures, type LocationFixture, type PartFixture } from '../../support/fixtures';

/**
 * The catalogue and stock pages as the stockroom uses them. Every list this file reads is narrowed to the parts and
 * drawers it made itself (their SKUs and codes start with the file's tag), so the demo data may change freely.
 */
describe('catalogue and stock in Chromium (stockroom)', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	let fx: Fixtures;
	/** Plano-convex parts with a datasheet EFL each, made out of order. */
	const efls = [140, 60, 100, 80];
	const planoConvex: PartFixture[] = [];
	const doublets: PartFixture[] = [];
	const biconvex: PartFixture[] = [];
	const drawers: LocationFixture[] = [];
	let sku = '';
	let partUrl = '';

	beforeAll(async () => {
		fx = await Fixtures.open('E2E-CAT');
		sku = `${fx.tag}-FORM`;
		for (const f of efls) planoConvex.push(await fx.part(`PCX${f}`, { name: `${fx.tag} plano-convex f ${f}`, kind: 'plano-convex', diameterMm: 25.4, eflMm: f }));
		for (const k of [1, 2]) doublets.push(await fx.part(`ACH${k}`, { name: `${fx.tag} doublet ${k}`, kind: 'achromatic-doublet', diameterMm: 25.4, surfaces: DOUBLET_SURFACES }));
		for (const f of [75, 50]) biconvex.push(await fx.part(`BCX${f}`, { name: `${fx.tag} biconvex f ${f}`, kind: 'biconvex', diameterMm: 25.4, eflMm: f }));
		for (const k of [1, 2, 3, 4]) drawers.push(await fx.location(`D${k}`, `Test drawer ${k} of ${fx.tag}`));
		// Every drawer holds something (an empty one shows no table); the first holds two parts.
		for (const [i, d] of drawers.entries()) await fx.receive(planoConvex[i].id, d.id, 2 + i);
		await fx.receive(biconvex[0].id, drawers[0].id, 1);
		browser = await openBrowser();
		page = browser.page;
		await signIn(page, 'stockroom@tarnwell.example');
	});
	afterAll(async () => {
		// Archive the parts again (this file's fixtures and the one made through the form).
		const formPart = /\/parts\/(\d+)$/.exec(partUrl)?.[1];
		if (formPart) await fx.api('DELETE', `/api/v1/parts/${formPart}`).catch(() => undefined);
		await fx?.cleanup();
		await browser?.close();
	});

	it('lists the parts of a search with their count, and sorts them by EFL on the server', async () => {
		await page.goto(appUrl(`/parts?q=${fx.tag}-PCX`));
		const table = page.getByTestId('parts-table');
		await expect(page.getByTestId('parts-total')).toHaveText(/^4 parts/);
		await expect.poll(() => columnTexts(table, 'SKU').then((s) => s.sort())).toEqual(planoConvex.map((p) => p.sku).sort());
		await screenshot(page, 'catalogue-list');
		await table.getByRole('button', { name: 'EFL (mm)' }).click();
		await expect(page).toHaveURL(/[?&]sort=eflMm(&|$)/);
		expect(new URL(page.url()).searchParams.get('order')).toBeNull(); // first click sorts ascending
		await expect.poll(() => columnTexts(table, 'EFL (mm)').then((t) => t.map((x) => parseFloat(x)))).toEqual([...efls].sort((a, b) => a - b));
		await expect(table.getByRole('columnheader', { name: 'EFL (mm)' })).toHaveAttribute('aria-sort', 'ascending');
	});

	it('names kinds for people, on one line, lists every glass of a doublet, and still filters by kind', async () => {
		await page.goto(appUrl(`/parts?q=${fx.tag}&kind=achromatic-doublet`));
		const table = page.getByTestId('parts-table');
		await expect.poll(() => columnTexts(table, 'SKU').then((s) => s.sort())).toEqual(doublets.map((p) => p.sku).sort());
		await expect.poll(() => columnTexts(table, 'Kind')).toEqual(['Achromatic doublet', 'Achromatic doublet']);
		// On one line: each kind cell's content is less than two lines high.
		const kindCells = table.getByRole('cell', { name: 'Achromatic doublet', exact: true });
		await expect(kindCells).toHaveCount(2);
		const lines = await kindCells.evaluateAll((tds) =>
			tds.map((td) => {
				const s = getComputedStyle(td);
				return (td.scrollHeight - parseFloat(s.paddingTop) - parseFloat(s.paddingBottom)) / parseFloat(s.lineHeight);
			})
		);
		for (const n of lines) expect(n).toBeLessThan(2);
		// Both glasses of the cemented doublet (crown 517642 cemented to flint 620364, as made above).
		await expect.poll(() => columnTexts(table, 'Glasses')).toEqual(['517642 + 620364', '517642 + 620364']);
		// The filter menu shows the same labels and keeps the codes as values.
		const kind = page.getByRole('combobox', { name: 'Kind', exact: true });
		await expect(kind.locator('option[value=plano-convex]')).toHaveText('Plano-convex');
		await kind.selectOption('plano-convex');
		await expect(page).toHaveURL(/kind=plano-convex/);
		await expect.poll(() => columnTexts(table, 'SKU').then((s) => s.sort())).toEqual(planoConvex.map((p) => p.sku).sort());
		await expect.poll(() => columnTexts(table, 'Kind')).toEqual(['Plano-convex', 'Plano-convex', 'Plano-convex', 'Plano-convex']);
	});

	it('downloads the current view as CSV, in the importer’s format', async () => {
		await page.goto(appUrl(`/parts?q=${fx.tag}&kind=biconvex&sort=eflMm`));
		const link = page.getByTestId('export-csv');
		await expect(link).toHaveAttribute('href', /^\/api\/v1\/parts\/export\.csv\?/);
		const href = (await link.getAttribute('href'))!;
		expect(new URLSearchParams(href.split('?')[1]).get('kind')).toBe('biconvex');
		// The same session downloads it (the API needs a signed-in user).
		const res = await page.request.get(appUrl(href));
		expect(res.status()).toBe(200);
		expect(res.headers()['content-type']).toBe('text/csv; charset=utf-8');
		const [head, ...rows] = Papa.parse<string[]>((await res.text()).replace(/^\uFEFF/, ''), { skipEmptyLines: true }).data;
		expect(head[1]).toBe('sku');
		// exactly this view: the two biconvex parts of this file, sorted by EFL (50 before 75)
		expect(rows.map((r) => r[head.indexOf('sku')])).toEqual([`${fx.tag}-BCX50`, `${fx.tag}-BCX75`]);
		expect(rows.map((r) => r[head.indexOf('kind')])).toEqual(['biconvex', 'biconvex']);
	});

	it('downloads the stock of the chosen location as CSV', async () => {
		await page.goto(appUrl('/stock'));
		await expect(page.getByTestId('stock-export-csv')).toHaveAttribute('href', '/api/v1/stock/export.csv');
		const [first] = drawers;
		await page.getByLabel('Location', { exact: true }).selectOption(String(first.id));
		await page.getByRole('button', { name: 'Show', exact: true }).click();
		await expect(page).toHaveURL(new RegExp(`[?&]locationId=${first.id}(&|$)`));
		await expect(page.getByTestId('stock-export-csv')).toHaveAttribute('href', `/api/v1/stock/export.csv?locationId=${first.id}`);
		const res = await page.request.get(appUrl(`/api/v1/stock/export.csv?locationId=${first.id}`));
		expect(res.status()).toBe(200);
		const [head, ...rows] = Papa.parse<string[]>((await res.text()).replace(/^\uFEFF/, ''), { skipEmptyLines: true }).data;
		expect(head.slice(0, 3)).toEqual(['locationCode', 'locationName', 'sku']);
		// what this file put in that drawer, and nothing of any other drawer
		const at = (name: string) => head.indexOf(name);
		expect(rows.map((r) => [r[at('locationCode')], r[at('sku')], r[at('quantity')]]).sort()).toEqual(
			[
				[first.code, planoConvex[0].sku, '2'],
				[first.code, biconvex[0].sku, '1']
			].sort()
		);
	});

	it('lines the stock tables up column by column, drawer after drawer', async () => {
		await page.goto(appUrl('/stock'));
		// this file's four drawers are among the tables
		for (const d of drawers) await expect(page.getByRole('heading', { name: d.code })).toBeVisible();
		const tables = page.getByTestId('stock-table');
		const lefts = await tables.evaluateAll((all) => all.map((t) => [...t.querySelectorAll('thead th')].map((th) => Math.round(th.getBoundingClientRect().left))));
		expect(lefts.length).toBeGreaterThanOrEqual(drawers.length);
		for (const l of lefts) expect(l).toEqual(lefts[0]);
	});

	it('creates a part through the form with a kind template and a field message on bad input', async () => {
		await page.goto(appUrl('/parts/new'));
		await page.getByLabel('SKU', { exact: true }).fill(sku);
		await page.getByLabel('Name', { exact: true }).fill('E2E plano-convex f 123');
		await page.getByLabel('Kind', { exact: true }).selectOption('plano-convex');
		await page.getByLabel('Diameter (mm)', { exact: true }).fill('25.4');
		await page.getByLabel('Datasheet EFL (mm)', { exact: true }).fill('123');
		await page.getByRole('button', { name: 'Fill for plano-convex' }).click();
		await expect(page.getByLabel(/^Surface \d+ radius \(mm\)$/)).toHaveCount(2);
		await expect(page.getByTestId('lens-profile')).toHaveCount(1);
		// A radius that cannot span the diameter is refused at its field, and the typed values stay.
		const r1 = page.getByLabel('Surface 1 radius (mm)', { exact: true });
		await expect(r1).not.toHaveValue('');
		const good = await r1.inputValue();
		await r1.fill('5');
		await page.getByRole('button', { name: 'Create part' }).click();
		await expect(page.getByText('A sphere of radius 5 mm cannot span a 25.4 mm diameter.')).toBeVisible();
		await expect(page.getByLabel('SKU', { exact: true })).toHaveValue(sku);
		await screenshot(page, 'part-form-error');
		await r1.fill(good);
		await page.getByRole('button', { name: 'Create part' }).click();
		await expect(page).toHaveURL(/\/parts\/\d+$/);
		partUrl = page.url();
		await expect(page.getByRole('heading', { level: 1 })).toContainText(sku);
		// f = R/(n − 1) for the template's R = (n − 1)·123 mm: the computed EFL is 123 mm at nd, close at 587.6 nm.
		const efl = parseFloat(await page.getByTestId('efl').innerText());
		expect(efl).toBeGreaterThan(122.5);
		expect(efl).toBeLessThan(123.5);
		await expect(page.getByTestId('abcd')).toHaveCount(1);
		// Nothing on the shelf yet: the stock operations open on receive.
		await expect(page.getByTestId('stock-totals')).toHaveText(/^0 usable · 0 available/);
		await expect(page.getByRole('tab', { selected: true })).toHaveText('receive');
		// The lens drawing fills its box's height and sits in the middle of it.
		const fig = (await page.getByTestId('lens-figure').boundingBox())!;
		const svg = (await page.getByTestId('lens-figure').getByTestId('lens-profile').boundingBox())!;
		expect(svg.height).toBeGreaterThan(180);
		expect(Math.abs(svg.x + svg.width / 2 - (fig.x + fig.width / 2))).toBeLessThan(2);
	});

	it('receives stock into a drawer and shows it with its ledger row', async () => {
		const [drawer] = drawers;
		await page.getByRole('tab', { name: 'receive' }).click();
		const form = page.getByTestId('stock-form-receive');
		await form.getByLabel('Units', { exact: true }).fill('4');
		await form.getByLabel('Location', { exact: true }).selectOption(String(drawer.id));
		await form.getByLabel('Note', { exact: true }).fill('E2E delivery');
		await form.getByRole('button', { name: 'Receive', exact: true }).click();
		await expect(page.getByTestId('stock-totals')).toHaveText(/^4 usable · 4 available/);
		const ledger = page.getByTestId('ledger');
		await expect(ledger.getByRole('row').filter({ hasText: 'E2E delivery' })).toHaveCount(1);
		// Dates read the same on every page: "2 Dec 2026, 04:46".
		await expect
			.poll(() => tableRows(ledger))
			.toEqual([expect.objectContaining({ When: expect.stringMatching(/^\d{1,2} [A-Z][a-z]{2} \d{4}, \d{2}:\d{2}$/), What: 'receive', Units: '4', To: expect.stringContaining(drawer.code), Note: 'E2E delivery' })]);
		// Issuing more than is there is refused with a clear message.
		await page.getByRole('tab', { name: 'issue' }).click();
		const issue = page.getByTestId('stock-form-issue');
		await issue.getByLabel('Units', { exact: true }).fill('9');
		await issue.getByLabel('Location', { exact: true }).selectOption(String(drawer.id));
		await issue.getByRole('button', { name: 'Issue', exact: true }).click();
		await expect(issue.getByText(/Not enough/)).toBeVisible();
		await expect(page.getByTestId('stock-totals')).toHaveText(/^4 usable · 4 available/);
		await screenshot(page, 'part-page');
	});

	it('finds the new part in the table by an EFL filter, and the link reproduces the view', async () => {
		await page.goto(appUrl('/parts'));
		await page.getByLabel('EFL from (mm)', { exact: true }).fill('122.5');
		await page.getByLabel('EFL to (mm)', { exact: true }).fill('123.5');
		const table = page.getByTestId('parts-table');
		await expect(table.getByRole('link', { name: sku, exact: true })).toBeVisible();
		await expect(page).toHaveURL(/eflMax=123\.5/);
		const link = page.url();
		expect(new URL(link).searchParams.get('eflMin')).toBe('122.5');
		await page.goto(link);
		await expect(table.getByRole('link', { name: sku, exact: true })).toHaveCount(1);
		await expect.poll(() => tableRows(table)).toContainEqual(expect.objectContaining({ SKU: sku, 'On hand': '4', Available: '4' }));
		// nothing outside the range is listed
		for (const e of await columnTexts(table, 'EFL (mm)')) {
			expect(parseFloat(e)).toBeGreaterThanOrEqual(122.5);
			expect(parseFloat(e)).toBeLessThanOrEqual(123.5);
		}
		await screenshot(page, 'catalogue-efl-filter');
	});
});
