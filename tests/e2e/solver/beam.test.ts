/**
 * An engineer at a laser bench asks Build from stock each beam question in Chromium: focus a
 * beam to a spot, collimate the light out of a fibre, couple a beam into a single-mode fibre,
 * any waist to any waist, and expand a beam. Each answer shows the to-scale envelope with its
 * waists and Rayleigh ranges and the laser caution that names the focus; the engineer saves a
 * beam setup, reserves its parts and prints the build sheet; every page fits a phone.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray } from 'drizzle-orm';
import type { Page } from 'playwright-core';
import { appUrl, openBrowser, screenshot, signIn } from '../../support/browser';
import { testDb } from '../../support/env';
import { reservations } from '../../../src/lib/server/db/schema';

const PHONE = { width: 390, height: 844 };
const DESKTOP = { width: 1280, height: 860 };

/** How far the page itself scrolls sideways (0 when only tables and drawings scroll inside their boxes). */
const sidewaysOverflow = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);

/** The caution every beam page carries: where the focus is, back-reflections, the laser safety officer and local rules. */
async function expectBeamCaution(page: Page) {
	const caution = await page.locator('[data-testid=laser-caution]').innerText();
	expect(caution).toMatch(/Laser caution/);
	// mode beam measures from z = 0, an expander from its first vertex
	expect(caution).toMatch(/at z = -?\d+\.\d mm|\d+\.\d mm after the first vertex/);
	expect(caution).toMatch(/back-reflections/);
	expect(caution).toMatch(/laser safety officer/);
	expect(caution).toMatch(/local laser rules/);
	return caution;
}

/** Asks the question on the page (fields already filled) and waits for the answers. */
async function ask(page: Page) {
	await page.click('[data-testid=solve-button]');
	await page.waitForSelector('[data-testid=solution-row]', { timeout: 60_000 });
}

/** The envelope drawing: a filled band with real extent, the output waist and its Rayleigh range marked. */
async function expectEnvelope(page: Page, waists: string[]) {
	const svg = page.locator('[data-testid=beam-envelope]');
	await svg.waitFor();
	const d = (await svg.locator('[data-testid=envelope-path]').getAttribute('d')) ?? '';
	// A sampled curve, not a few straight strokes (a collimated beam's envelope is drawn to three times the parts'
	// reach, so a short collimator shows about 40 points of its sampled envelope).
	expect(d.split(' L').length).toBeGreaterThan(30);
	const box = (await svg.locator('[data-testid=envelope-path]').boundingBox())!;
	expect(box.width).toBeGreaterThan(300);
	// Each waist is marked with its Rayleigh range, or (far beyond the parts, as a collimated beam's) named at the edge.
	for (const w of waists) {
		const drawn = await svg.locator(`[data-waist=${w}]`).count();
		if (drawn) expect(await svg.locator(`[data-rayleigh=${w}]`).count()).toBe(1);
		else expect(await svg.locator(`[data-waist-beyond=${w}]`).textContent()).toMatch(/beyond the drawing/);
	}
	expect(await svg.locator('.lens-profile path').count()).toBeGreaterThanOrEqual(1);
	await expect(page.locator('[data-testid=envelope-legend]').innerText()).resolves.toMatch(/To scale, the same in both directions/);
}

/** A picture of one element (the drawing), to look at beside the full-page screenshots. */
async function shotOf(page: Page, selector: string, name: string) {
	const dir = path.join(process.env.SCREENSHOT_DIR || process.env.TEST_TMP || os.tmpdir(), 'screenshots');
	fs.mkdirSync(dir, { recursive: true });
	await page.locator(selector).first().screenshot({ path: path.join(dir, `${name}.png`) });
}

describe('Shape and expand a laser beam in the browser', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	const { db, pool } = testDb();
	const savedSetups: number[] = [];

	beforeAll(async () => {
		browser = await openBrowser();
		page = browser.page;
		await signIn(page, 'engineer@tarnwell.example');
	});
	afterAll(async () => {
		// Release what the test reserved, through the API as the engineer would.
		if (savedSetups.length && page) {
			const held = await db
				.select({ id: reservations.id })
				.from(reservations)
				.where(and(inArray(reservations.setupId, savedSetups), eq(reservations.status, 'active')));
			const origin = new URL(appUrl('/')).origin;
			for (const r of held) await page.request.delete(appUrl(`/api/v1/reservations/${r.id}`), { headers: { origin } });
		}
		await browser?.close();
		await pool.end();
	});

	it('focuses a 2 mm beam to a 20 µm spot 150 mm away, with the irradiance at the focus for 0.5 W', async () => {
		await page.goto(appUrl('/build'));
		await page.click('[data-question=beam]');
		await page.waitForURL(/question=beam/);
		await expect(page.locator('[data-preset=focus]').getAttribute('aria-current')).resolves.toBe('true');
		for (const [name, unit] of [
			['inD', 'mm'],
			['inAt', 'mm'],
			['outD', 'µm'],
			['outAt', 'mm'],
			['wavelength', 'nm'],
			['power', 'W']
		]) {
			await expect(page.locator(`[data-unit=${name}]`).innerText()).resolves.toBe(`(${unit})`);
		}
		await page.fill('input[name=inD]', '2 mm');
		await page.fill('input[name=outD]', '20 um');
		await page.fill('input[name=outAt]', '150 mm');
		await page.fill('input[name=wavelength]', '1064 nm');
		await page.fill('input[name=power]', '0.5 W');
		await ask(page);
		const url = new URL(page.url());
		expect(url.searchParams.get('question')).toBe('beam');
		expect(url.searchParams.get('preset')).toBe('focus');
		expect(url.searchParams.get('outD')).toBe('20 um');
		const efficiency = await page.locator('[data-testid=efficiency]').first().innerText();
		expect(Number(efficiency.replace(' %', ''))).toBeGreaterThan(50);
		await expectEnvelope(page, ['output']);
		const caution = await expectBeamCaution(page);
		expect(caution).toMatch(/comes to a focus/);
		// 2P/(πw0²) for the output waist: the figure and its unit
		await expect(page.locator('[data-testid=peak-irradiance]').innerText()).resolves.toMatch(/^\d+(\.\d+)? (k|M|G)?W\/cm²$/);
		expect(caution).toMatch(/peak irradiance of about \d+(\.\d+)? (k|M|G)?W\/cm²/);
		expect(await page.locator('[data-testid=beam-part-row]').count()).toBeGreaterThanOrEqual(1);
		await expect(page.locator('[data-testid=shift-efficiency]').first().innerText()).resolves.toMatch(/\d+\.\d % \/ \d+\.\d %/);
		await screenshot(page, 'beam-focus');
		await shotOf(page, '[data-testid=beam-envelope-box]', 'beam-focus-drawing');
		// the link reproduces the question
		await page.goto(page.url());
		await page.waitForSelector('[data-testid=solution-row]', { timeout: 60_000 });
		expect(await page.inputValue('input[name=outD]')).toBe('20 um');
	});

	it('collimates the light out of a fibre (core and NA) to a 3 mm beam', async () => {
		await page.goto(appUrl('/build?question=beam&preset=collimate'));
		await page.fill('input[name=mfd]', '');
		await page.fill('input[name=core]', '3.5 um');
		await page.fill('input[name=fibreNa]', '0.13');
		await page.fill('input[name=outD]', '3 mm');
		await page.fill('input[name=wavelength]', '632.8 nm');
		await ask(page);
		await expectEnvelope(page, ['output']);
		await expectBeamCaution(page);
		await screenshot(page, 'beam-collimate');
		await shotOf(page, '[data-testid=beam-envelope-box]', 'beam-collimate-drawing');
	});

	it('couples a beam into a single-mode fibre of 6.2 µm mode field', async () => {
		await page.goto(appUrl('/build?question=beam&preset=fibre'));
		await page.fill('input[name=inD]', '3 mm');
		await page.fill('input[name=mfd]', '6.2 um');
		await ask(page);
		await expectEnvelope(page, ['output']);
		const caution = await expectBeamCaution(page);
		expect(caution).toMatch(/comes to a focus/);
		await screenshot(page, 'beam-fibre');
		await shotOf(page, '[data-testid=beam-envelope-box]', 'beam-fibre-drawing');
	});

	it('takes any waist to any waist, and names the field of a wrong input', async () => {
		await page.goto(appUrl('/build?question=beam&preset=waist'));
		await page.fill('input[name=m2]', '0.5');
		await page.click('[data-testid=solve-button]');
		await page.waitForSelector('[data-field-error=m2]');
		await expect(page.locator('[data-field-error=m2]').innerText()).resolves.toMatch(/M² cannot be below 1/);
		await page.fill('input[name=m2]', '1.1');
		await ask(page);
		await expectEnvelope(page, ['output']);
		await expectBeamCaution(page);
		await screenshot(page, 'beam-waist');
		await shotOf(page, '[data-testid=beam-envelope-box]', 'beam-waist-drawing');
	});

	it('expands a beam 5× in at most 250 mm, and draws the focus between the parts', async () => {
		await page.goto(appUrl('/build?question=afocal'));
		await page.fill('input[name=inD]', '1 mm');
		await page.fill('input[name=expansion]', '5');
		await page.fill('input[name=maxLength]', '250 mm');
		await page.selectOption('select[name=focus]', 'focus');
		await page.fill('input[name=power]', '5 mW');
		await ask(page);
		const expansion = await page.locator('[data-testid=expansion]').first().innerText();
		expect(Math.abs(Number(expansion.replace('×', '')) / 5 - 1)).toBeLessThanOrEqual(0.02);
		await expect(page.locator('[data-testid=residual-divergence]').first().innerText()).resolves.toMatch(/\d+\.\d{3} mrad|not traced/);
		await expectEnvelope(page, ['intermediate']);
		const caution = await expectBeamCaution(page);
		expect(caution).toMatch(/focus between the two parts/);
		await screenshot(page, 'beam-expand');
		await shotOf(page, '[data-testid=beam-envelope-box]', 'beam-expand-drawing');
		// saved, its page and its sheet draw the same expander and name the focus between the parts
		await page.fill('input[name=name]', 'E2E 5× expander for the alignment laser');
		await Promise.all([page.waitForURL(/\/build\/\d+$/), page.click('[data-testid=save-button]')]);
		savedSetups.push(Number(new URL(page.url()).pathname.split('/').pop()));
		await expect(page.locator('[data-testid=setup-question]').innerText()).resolves.toMatch(/Expand a 1\.00 mm beam 5× .* at most 250\.0 mm long, with a focus between the parts/);
		await expectEnvelope(page, ['intermediate']);
		await expectBeamCaution(page);
		await Promise.all([page.waitForURL(/\/sheet$/), page.click('[data-testid=sheet-link]')]);
		await expect(page.locator('[data-testid=sheet-expected]').innerText()).resolves.toMatch(/Gap between the parts \(vertex to vertex\) \d+\.\d\d mm/);
		await expectEnvelope(page, ['intermediate']);
		await expectBeamCaution(page);
		await screenshot(page, 'beam-expand-sheet');
	});

	it('saves a focusing setup, reserves its parts and prints the build sheet with the caution', async () => {
		await page.goto(appUrl('/build?question=beam&preset=focus&inD=2+mm&inAt=0+mm&outD=20+um&outAt=150+mm&wavelength=1064+nm&power=0.5+W&maxParts=1'));
		await page.waitForSelector('[data-testid=save-form]', { timeout: 60_000 });
		await page.fill('input[name=name]', 'E2E focus for the cutting bench');
		await Promise.all([page.waitForURL(/\/build\/\d+$/), page.click('[data-testid=save-button]')]);
		savedSetups.push(Number(new URL(page.url()).pathname.split('/').pop()));
		await expect(page.locator('h1').textContent()).resolves.toContain('E2E focus for the cutting bench');
		await expect(page.locator('[data-testid=setup-question]').innerText()).resolves.toMatch(/Shape a beam .* Ø 20\.0 µm at z = 150\.0 mm/);
		await expectEnvelope(page, ['output']);
		await expectBeamCaution(page);
		await screenshot(page, 'beam-setup-page');
		await page.click('[data-testid=reserve-button]');
		await page.waitForSelector('[data-testid=reserve-ok], [data-testid=reserve-error]');
		await expect(page.locator('[data-testid=reserve-ok]').isVisible()).resolves.toBe(true);
		await page.waitForSelector('[data-testid=reservations] li');
		await Promise.all([page.waitForURL(/\/sheet$/), page.click('[data-testid=sheet-link]')]);
		const sheet = await page.locator('[data-testid=build-sheet]').innerText();
		expect(sheet).toMatch(/TW-/);
		expect(sheet).toMatch(/A\d-D\d|B\d-D\d/);
		expect(sheet).toMatch(/Target waist/);
		// bench words for a beam: the incoming beam, never an object
		for (const w of await page.locator('td[data-testid=orientation]').allInnerTexts()) {
			expect(w).toMatch(/toward the incoming beam|either way round/);
			expect(w).not.toMatch(/object|surface \d/);
		}
		expect(sheet).toMatch(/efficiency \d+\.\d %/);
		await expectBeamCaution(page);
		await page.emulateMedia({ media: 'print' });
		await expectEnvelope(page, ['output']);
		await screenshot(page, 'beam-sheet-print');
		await shotOf(page, '[data-testid=beam-envelope-box]', 'beam-sheet-print-drawing');
		expect(await page.locator('header nav').isVisible()).toBe(false);
		await page.emulateMedia({ media: 'screen' });
	});

	it('offers "What purchase would help?" when nothing on the shelf shapes the beam well enough', async () => {
		// One part only, and 99 % of a 0.677 mm waist 2 m on from a 2 mm beam at 1064 nm: that waist needs f ≥ 1000 mm
		// (w0′ ≤ w0·f/z_R with z_R = πw0²/λ ≈ 2.95 m; Kogelnik & Li 1966, thin-lens waist transformation), which the shelf lacks.
		await page.goto(
			appUrl('/build?question=beam&preset=waist&inD=2+mm&inAt=0+mm&m2=1&outD=0.677+mm&outAt=2000+mm&wavelength=1064+nm&minEff=99&maxParts=1')
		);
		await page.waitForSelector('[data-testid=unlock-offer]', { timeout: 60_000 });
		await page.click('[data-testid=unlock-button]');
		await page.waitForSelector('[data-testid=purchase-suggestion]', { timeout: 60_000 });
		const text = await page.locator('[data-testid=purchase-suggestion]').innerText();
		expect(text).toMatch(/Buy \d+ × TW-|No single purchase|no purchase of a catalogued part can help/);
		if (await page.locator('[data-testid=suggested-sku]').count()) {
			// worded for a beam: its efficiency, not a magnification
			await expect(page.locator('[data-testid=suggested-efficiency]').innerText()).resolves.toMatch(/^\d+\.\d %$/);
			expect(text).not.toMatch(/Magnification/);
		}
		await expect(page.locator('[data-testid=laser-caution]').innerText()).resolves.toMatch(/laser safety officer/);
		await screenshot(page, 'beam-purchase-suggestion');
	});

	it('fits a phone: the beam question, its answers, the setup page and the sheet', async () => {
		await page.setViewportSize(PHONE);
		try {
			await page.goto(appUrl('/build?question=beam&preset=focus&inD=2+mm&inAt=0+mm&outD=20+um&outAt=150+mm&wavelength=1064+nm'));
			await page.waitForSelector('[data-testid=beam-envelope]', { timeout: 60_000 });
			expect(await sidewaysOverflow(page)).toBeLessThanOrEqual(0);
			await screenshot(page, 'beam-focus-phone');
			await shotOf(page, '[data-testid=beam-envelope-box]', 'beam-focus-phone-drawing');
			await page.goto(appUrl('/build?question=afocal&inD=1+mm&expansion=5&maxLength=250+mm'));
			await page.waitForSelector('[data-testid=beam-envelope]', { timeout: 60_000 });
			expect(await sidewaysOverflow(page)).toBeLessThanOrEqual(0);
			await screenshot(page, 'beam-expand-phone');
			await shotOf(page, '[data-testid=beam-envelope-box]', 'beam-expand-phone-drawing');
			const id = savedSetups[0];
			expect(id).toBeGreaterThan(0);
			await page.goto(appUrl(`/build/${id}`));
			expect(await sidewaysOverflow(page)).toBeLessThanOrEqual(0);
			await screenshot(page, 'beam-setup-phone');
			await page.goto(appUrl(`/build/${id}/sheet`));
			expect(await sidewaysOverflow(page)).toBeLessThanOrEqual(0);
			await screenshot(page, 'beam-sheet-phone');
		} finally {
			await page.setViewportSize(DESKTOP);
		}
	});
});
