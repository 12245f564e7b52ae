/**
 * The build pages as a demanding user reads them, in Chromium: every field's error at once with
 * units on the labels, a compact results table that says how it ranks, one orientation wording
 * from table to build sheet, a diagram whose labels stay readable (offset from their lines,
 * scrolling on a phone, a scale bar on paper), matrices without rounding noise, and saved setups
 * that can be found again from /build.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inArray } from 'drizzle-orm';
import type { Page } from 'playwright-core';
import { appUrl, openBrowser, screenshot, signIn } from '../../support/browser';
import { testDb } from '../../support/env';
import { setups } from '../../../src/lib/server/db/schema';

const QUESTION = '/build?objectHeight=2+mm&track=300+mm&magnification=-0.5&na=0.03';
const ORIENTATION = /^\d: ((curved \((convex|concave)\) |flat |convex |concave |more strongly curved |flatter )face toward the object|both outer faces|either way round \(symmetric part: both faces alike\)|datasheet's (front|back) face \(as marked\) toward the object)/;

/** Height in lines of each cell part that must stay on one line (codes, drawers, positions). */
const nowrapLines = (page: Page) =>
	page.locator('[data-testid=solutions] td .whitespace-nowrap').evaluateAll((els) =>
		els.map((e) => {
			const style = getComputedStyle(e);
			const line = parseFloat(style.lineHeight) || parseFloat(style.fontSize) * 1.5;
			return e.getBoundingClientRect().height / line;
		})
	);

describe('Build pages in the browser', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	const { db, pool } = testDb();
	const created: number[] = [];
	beforeAll(async () => {
		browser = await openBrowser();
		page = browser.page;
		await signIn(page, 'engineer@tarnwell.example');
	});
	afterAll(async () => {
		await browser?.close();
		// The setups this file saved hold no reservations; remove them so other files' lists stay as they were.
		if (created.length) await db.delete(setups).where(inArray(setups.id, created));
		await pool.end();
	});

	it('shows every wrong field at once, and each numeric field says its unit', async () => {
		await page.goto(appUrl('/build'));
		for (const [name, unit] of [
			['objectHeight', 'mm'],
			['track', 'mm'],
			['wavelength', 'nm'],
			['minGap', 'mm'],
			['minWd', 'mm'],
			['magnification', 'no unit'],
			['na', 'no unit']
		]) {
			await expect(page.locator(`[data-unit=${name}]`).innerText()).resolves.toBe(`(${unit})`);
		}
		await page.fill('input[name=objectHeight]', 'abc');
		await page.fill('input[name=track]', '-5');
		await page.fill('input[name=magnification]', '0');
		await page.fill('input[name=na]', '2');
		await page.click('[data-testid=solve-button]');
		await page.waitForSelector('[data-field-error=na]');
		const shown = await page.locator('[data-field-error]').evaluateAll((els) => els.map((e) => e.getAttribute('data-field-error')).sort());
		expect(shown).toEqual(['magnification', 'na', 'objectHeight', 'track']);
		await expect(page.locator('[data-testid=error-summary]').innerText()).resolves.toContain('4 fields need a fix');
		await screenshot(page, 'build-all-errors');
	});

	it('keeps part codes and drawers on one line, explains the ranking and names what put each answer lower', async () => {
		await page.goto(appUrl(QUESTION));
		await page.waitForSelector('[data-testid=solution-row]', { timeout: 30_000 });
		expect(await page.locator('[data-testid=solution-row]').count()).toBeGreaterThan(1);
		// Each code and each drawer is one line high.
		const lines = await nowrapLines(page);
		expect(lines.length).toBeGreaterThan(4);
		for (const n of lines) expect(n).toBeLessThan(1.5);
		await expect(page.locator('[data-testid=ranking-note] summary').innerText()).resolves.toMatch(/same band tie/);
		const why = await page.locator('[data-testid=why-here]').allInnerTexts();
		expect(why[0]).toBe('best');
		for (const w of why.slice(1)) expect(w).toMatch(/than #\d|as #\d|with #\d|not traced/);
		for (const cell of await page.locator('[data-testid=solutions] [data-testid=orientation] > div').allInnerTexts()) expect(cell).toMatch(ORIENTATION);
		await screenshot(page, 'build-table');
	});

	it('draws dimension labels beside their lines, and shows matrices and tolerances in plain words', async () => {
		const svg = page.locator('[data-testid=setup-layout]');
		await svg.waitFor();
		const clash = await svg.evaluate((el) => {
			const texts = [...el.querySelectorAll('text[data-dim]')] as SVGTextElement[];
			return texts.map((t) => {
				const box = t.getBBox();
				const line = t.previousElementSibling?.previousElementSibling as SVGLineElement;
				return box.y + box.height - Number(line.getAttribute('y1'));
			});
		});
		expect(clash.length).toBeGreaterThanOrEqual(2);
		for (const overlapPx of clash) expect(overlapPx).toBeLessThanOrEqual(1);
		await expect(page.locator('[data-testid=layout-legend]').innerText()).resolves.toMatch(/bar at the bottom right is \d+ mm long/);
		expect(await page.locator('[data-testid=layout-legend]').innerText()).not.toMatch(/px/);
		const abcd = await page.locator('[data-testid=abcd]').innerText();
		expect(abcd).toMatch(/B 0 mm/);
		expect(abcd).not.toMatch(/e[+-]\d/);
		await expect(page.locator('[data-testid=ptm-note]').innerText()).resolves.toMatch(/object point .* image point/);
		const tol = await page.locator('[data-testid=tolerance]').innerText();
		expect(tol).toMatch(/\+1 %\s+moves \d+\.\d\d mm away from the lens/);
		expect(tol).toMatch(/−1 %\s+moves \d+\.\d\d mm toward the lens/);
		expect(tol).not.toMatch(/−\s*:\s*-/);
	});

	it('on a phone the diagram keeps its size and scrolls sideways', async () => {
		await page.setViewportSize({ width: 390, height: 844 });
		try {
			await page.goto(appUrl(QUESTION));
			const box = page.locator('[data-testid=setup-layout-box]');
			await box.waitFor({ timeout: 30_000 });
			const size = await box.evaluate((el) => ({ client: el.clientWidth, scroll: el.scrollWidth, svg: el.querySelector('svg')!.getBoundingClientRect().width }));
			expect(size.svg).toBeGreaterThanOrEqual(560);
			expect(size.scroll).toBeGreaterThan(size.client);
			await expect(page.locator('[data-testid=layout-scroll-hint]').isVisible()).resolves.toBe(true);
			// the table scrolls too, and its codes and drawers still do not break
			for (const n of await nowrapLines(page)) expect(n).toBeLessThan(1.5);
			// what is wider than the phone scrolls in its own box: the page itself does not
			expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
			await screenshot(page, 'build-phone');
		} finally {
			await page.setViewportSize({ width: 1280, height: 860 });
		}
	});

	it('says "no answer" once, and a purchase search over an empty catalogue answer says why instead of "searched 0"', async () => {
		// m = −0.5 over a 20 mm track wants f ≈ 4.4 mm (track = 4.5 f for a thin lens, from memory); no catalogue part is that short.
		await page.goto(appUrl('/build?track=20+mm&magnification=-0.5&na=0.01&objectHeight=0.1+mm'));
		await page.waitForSelector('[data-testid=unlock-button]', { timeout: 30_000 });
		expect((await page.locator('main').innerText()).match(/Nothing on the shelf/g)).toHaveLength(1);
		expect(await page.locator('[data-testid=unlock-reason]').count()).toBe(0);
		await page.click('[data-testid=unlock-button]');
		await page.waitForSelector('[data-testid=no-purchase]', { timeout: 30_000 });
		await expect(page.locator('[data-testid=no-purchase]').innerText()).resolves.toMatch(/whole catalogue, in stock or not, has no setup/);
		expect(await page.locator('[data-testid=purchase-search-summary]').count()).toBe(0);
		expect(await page.locator('main').innerText()).not.toMatch(/Searched 0|Compared the best 0/);
	});

	it('a single-part question with no exact track names the nearest parts; a track tolerance from the form lets one answer and says which track', async () => {
		const ask = '/build?objectHeight=0.1+mm&magnification=-1&na=0.01&maxParts=1&track=450+mm';
		await page.goto(appUrl(ask + '&trackTolerance=0+mm'));
		await page.waitForSelector('[data-testid=no-answer]', { timeout: 30_000 });
		const hint = await page.locator('[data-testid=near-tracks]').innerText();
		expect(hint).toMatch(/the f = -?\d+(\.\d)? mm part \S+ works at \d+(\.\d)? mm/);
		const need = /track tolerance of (\d+(?:\.\d)?) mm/.exec(hint);
		expect(need).not.toBeNull();
		await page.fill('input[name=trackTolerance]', `${need![1]} mm`);
		await page.click('[data-testid=solve-button]');
		await page.waitForSelector('[data-testid=solution-row]', { timeout: 30_000 });
		expect(new URL(page.url()).searchParams.get('trackTolerance')).toBe(`${need![1]} mm`);
		await expect(page.locator('[data-testid=track-used]').first().innerText()).resolves.toMatch(/^track \d+\.\d\d mm \([+−]\d+\.\d\d mm\)$/);
		await screenshot(page, 'build-track-tolerance');
	});

	it('lists a saved setup on /build and links it; the setup page and the build sheet use the same words', async () => {
		await page.goto(appUrl(QUESTION));
		await page.waitForSelector('[data-testid=save-form]', { timeout: 30_000 });
		const tableWords = await page.locator('[data-testid=solution-row]').first().locator('[data-testid=orientation] > div').allInnerTexts();
		const cells = await page.locator('[data-testid=solution-row]').first().locator('td').allInnerTexts();
		const tableSpot = cells[5].trim().split(/\s*\/\s*/);
		const tableRatio = cells[6].trim().split(/\s/)[0];
		const name = `E2E findable setup ${Date.now().toString(36)}`;
		await page.fill('input[name=name]', name);
		await Promise.all([page.waitForURL(/\/build\/\d+$/), page.click('[data-testid=save-button]')]);
		const id = Number(new URL(page.url()).pathname.split('/').pop());
		created.push(id);
		// the setup page: back link with the arrow, the same orientation words as the table row
		await expect(page.locator('main a[href="/build"]').first().innerText()).resolves.toBe('← Build from stock');
		// the answer's figures: spot on axis and at the edge as in the table, the ratio to Airy, vignetting
		const figures = page.locator('[data-testid=answer-figures]');
		await expect(figures.locator('[data-figure="spot.axialRmsMm"]').innerText()).resolves.toBe(`${tableSpot[0]} µm`);
		await expect(figures.locator('[data-figure="spot.edgeRmsMm"]').innerText()).resolves.toBe(`${tableSpot[1]} µm`);
		await expect(figures.locator('[data-figure="spot.ratioToAiry"]').innerText()).resolves.toBe(tableRatio);
		await expect(figures.locator('[data-figure="vignetting.edge"]').innerText()).resolves.toMatch(/^(yes|no)$/);
		const setupWords = await page.locator('td[data-testid=orientation]').allInnerTexts();
		expect(setupWords.map((w, k) => `${k + 1}: ${w}`.replace(/\s+/g, ' ').trim())).toEqual(tableWords.map((w) => w.replace(/\s+/g, ' ').trim()));
		// the build sheet: the same words, and a scale bar instead of pixels
		await page.goto(appUrl(`/build/${id}/sheet`));
		const sheetWords = await page.locator('td[data-testid=orientation]').allInnerTexts();
		expect(sheetWords.map((w) => w.replace(/\s+/g, ' ').trim())).toEqual(setupWords.map((w) => w.replace(/\s+/g, ' ').trim()));
		expect(Number(await page.locator('[data-testid=scale-bar]').getAttribute('data-mm'))).toBeGreaterThan(0);
		await expect(page.locator('[data-testid=answer-figures] [data-figure="spot.axialRmsMm"]').innerText()).resolves.toBe(`${tableSpot[0]} µm`);
		expect(await page.locator('[data-testid=build-sheet]').innerText()).not.toMatch(/\d px/);
		await expect(page.locator('[data-testid=sheet-tolerance]').first().innerText()).resolves.toMatch(/longer, the sharp image moves \d+\.\d\d mm away from the lens/);
		await page.emulateMedia({ media: 'print' });
		await screenshot(page, 'build-sheet-scale-bar');
		await page.emulateMedia({ media: 'screen' });
		// back on /build the new setup is listed first (it is mine and the newest), with its parts and a link
		await page.goto(appUrl('/build'));
		const row = page.locator('[data-testid=saved-setup-row]').first();
		await expect(row.getAttribute('data-setup-id')).resolves.toBe(String(id));
		await expect(row.innerText()).resolves.toContain(name);
		await expect(row.innerText()).resolves.toMatch(/by you/);
		await expect(row.locator('[data-testid=saved-setup-reserved]').innerText()).resolves.toBe('not reserved');
		await Promise.all([page.waitForURL(new RegExp(`/build/${id}$`)), row.locator(`a[href="/build/${id}"]`).click()]);
		await expect(page.locator('h1').innerText()).resolves.toBe(name);
		// and in the full list, by name
		await page.goto(appUrl(`/build/setups?q=${encodeURIComponent(name)}`));
		await expect(page.locator('[data-testid=saved-setup-row]').count()).resolves.toBe(1);
		await screenshot(page, 'build-saved-setups');
	});
});
