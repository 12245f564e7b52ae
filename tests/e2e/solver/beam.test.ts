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
import { afterAll, beforeAll, describe, it } from 'vitest';
import type { Page } from 'playwright-core';
import { appUrl, expect, openBrowser, screenshot, signIn, tableRows } from '../../support/browser';
import { releaseSetups, reserveAndOpenSheet } from '../../support/fixtures';

const PHONE = { width: 390, height: 844 };
const DESKTOP = { width: 1280, height: 860 };

/** How far the page itself scrolls sideways (0 when only tables and drawings scroll inside their boxes). */
const sidewaysOverflow = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);

/** The solver's answers may take a while on two shared cores. */
const SOLVED = { timeout: 60_000 };

/** A field of the question form by its label ("Spot diameter (µm)"): the text before the unit, or a pattern. */
const field = (page: Page, label: string | RegExp) =>
	page.getByLabel(typeof label === 'string' ? new RegExp(`^${label.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')} \\(`) : label);

/** The caution every beam page carries: where the focus is, back-reflections, the laser safety officer and local rules. */
async function expectBeamCaution(page: Page) {
	const caution = page.getByTestId('laser-caution');
	await expect(caution).toContainText(/Laser caution/);
	// mode beam measures from z = 0, an expander from its first vertex
	await expect(caution).toContainText(/at z = -?\d+\.\d mm|\d+\.\d mm after the first vertex/);
	await expect(caution).toContainText(/back-reflections/);
	await expect(caution).toContainText(/laser safety officer/);
	await expect(caution).toContainText(/local laser rules/);
	return caution;
}

/** Asks the question on the page (fields already filled) and waits for the answers. */
async function ask(page: Page) {
	await page.getByRole('button', { name: 'Find setups' }).click();
	await expect(page.getByTestId('solution-row')).not.toHaveCount(0, SOLVED);
}

/** The envelope drawing: a filled band with real extent, the output waist and its Rayleigh range marked. */
async function expectEnvelope(page: Page, waists: string[]) {
	const svg = page.getByTestId('beam-envelope');
	await expect(svg).toBeVisible();
	const path = svg.getByTestId('envelope-path');
	// A sampled curve, not a few straight strokes (a collimated beam's envelope is drawn to three times the parts'
	// reach, so a short collimator shows about 40 points of its sampled envelope).
	await expect(path).toHaveAttribute('d', /( L[^L]*){31}/);
	const box = (await path.boundingBox())!;
	expect(box.width).toBeGreaterThan(300);
	// Each waist is marked with its Rayleigh range, or (far beyond the parts, as a collimated beam's) named at the edge.
	for (const w of waists) {
		const drawn = await svg.locator(`[data-waist=${w}]`).count();
		if (drawn) await expect(svg.locator(`[data-rayleigh=${w}]`)).toHaveCount(1);
		else await expect(svg.locator(`[data-waist-beyond=${w}]`)).toHaveText(/beyond the drawing/);
	}
	await expect(svg.locator('.lens-profile path')).not.toHaveCount(0);
	await expect(page.getByTestId('envelope-legend')).toContainText(/To scale, the same in both directions/);
}

/** A picture of one element (the drawing), to look at beside the full-page screenshots. */
async function shotOf(page: Page, testId: string, name: string) {
	const dir = path.join(process.env.SCREENSHOT_DIR || process.env.TEST_TMP || os.tmpdir(), 'screenshots');
	fs.mkdirSync(dir, { recursive: true });
	await page.getByTestId(testId).screenshot({ path: path.join(dir, `${name}.png`) });
}

describe('Shape and expand a laser beam in the browser', () => {
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

	it('focuses a 2 mm beam to a 20 µm spot 150 mm away, with the irradiance at the focus for 0.5 W', async () => {
		await page.goto(appUrl('/build'));
		await page.getByRole('link', { name: 'Shape a laser beam' }).click();
		await expect(page).toHaveURL(/question=beam/);
		await expect(page.getByRole('list', { name: 'Kind of beam question' }).getByRole('link', { name: 'Focus', exact: true })).toHaveAttribute('aria-current', 'true');
		for (const [label, unit] of [
			['Beam diameter', 'mm'],
			['Beam waist at', 'mm'],
			['Spot diameter', 'µm'],
			['Focus at', 'mm'],
			['Wavelength', 'nm'],
			['Beam power (optional)', 'W']
		]) {
			await expect(field(page, new RegExp(`^${label.replace(/[()]/g, '\\$&')} \\(${unit}\\)`))).toBeVisible();
		}
		await field(page, 'Beam diameter').fill('2 mm');
		await field(page, 'Spot diameter').fill('20 um');
		await field(page, 'Focus at').fill('150 mm');
		await field(page, 'Wavelength').fill('1064 nm');
		await field(page, 'Beam power (optional)').fill('0.5 W');
		await ask(page);
		const url = new URL(page.url());
		expect(url.searchParams.get('question')).toBe('beam');
		expect(url.searchParams.get('preset')).toBe('focus');
		expect(url.searchParams.get('outD')).toBe('20 um');
		// the answer ranked #1 puts more than half the power into the spot
		const best = (await tableRows(page.getByTestId('beam-solutions'))).find((r) => r['#'] === '1');
		expect(best).toBeDefined();
		expect(parseFloat(best!.Efficiency)).toBeGreaterThan(50);
		await expectEnvelope(page, ['output']);
		const caution = await expectBeamCaution(page);
		await expect(caution).toContainText(/comes to a focus/);
		// 2P/(πw0²) for the output waist: the figure and its unit
		await expect(page.getByTestId('peak-irradiance')).toHaveText(/^\d+(\.\d+)? (k|M|G)?W\/cm²$/);
		await expect(caution).toContainText(/peak irradiance of about \d+(\.\d+)? (k|M|G)?W\/cm²/);
		await expect(page.getByTestId('beam-part-row')).not.toHaveCount(0);
		const shifts = await page.getByTestId('shift-efficiency').allInnerTexts();
		expect(shifts.length).toBeGreaterThan(0);
		for (const t of shifts) expect(t).toMatch(/\d+\.\d % \/ \d+\.\d %/);
		await screenshot(page, 'beam-focus');
		await shotOf(page, 'beam-envelope-box', 'beam-focus-drawing');
		// the link reproduces the question
		await page.goto(page.url());
		await expect(page.getByTestId('solution-row')).not.toHaveCount(0, SOLVED);
		await expect(field(page, 'Spot diameter')).toHaveValue('20 um');
	});

	it('collimates the light out of a fibre (core and NA) to a 3 mm beam', async () => {
		await page.goto(appUrl('/build?question=beam&preset=collimate'));
		await field(page, /mode field diameter \(µm\)/).fill('');
		await field(page, 'or core diameter').fill('3.5 um');
		await field(page, 'and fibre NA').fill('0.13');
		await field(page, 'Collimated beam diameter').fill('3 mm');
		await field(page, 'Wavelength').fill('632.8 nm');
		await ask(page);
		await expectEnvelope(page, ['output']);
		await expectBeamCaution(page);
		await screenshot(page, 'beam-collimate');
		await shotOf(page, 'beam-envelope-box', 'beam-collimate-drawing');
	});

	it('couples a beam into a single-mode fibre of 6.2 µm mode field', async () => {
		await page.goto(appUrl('/build?question=beam&preset=fibre'));
		await field(page, 'Beam diameter').fill('3 mm');
		await field(page, /mode field diameter \(µm\)/).fill('6.2 um');
		await ask(page);
		await expectEnvelope(page, ['output']);
		const caution = await expectBeamCaution(page);
		await expect(caution).toContainText(/comes to a focus/);
		await screenshot(page, 'beam-fibre');
		await shotOf(page, 'beam-envelope-box', 'beam-fibre-drawing');
	});

	it('takes any waist to any waist, and names the field of a wrong input', async () => {
		await page.goto(appUrl('/build?question=beam&preset=waist'));
		const m2 = field(page, 'M²');
		await m2.fill('0.5');
		await page.getByRole('button', { name: 'Find setups' }).click();
		await expect(m2).toHaveAttribute('aria-invalid', 'true');
		await expect(page.locator('[data-field-error=m2]')).toHaveText(/M² cannot be below 1/);
		await m2.fill('1.1');
		await ask(page);
		await expect(m2).not.toHaveAttribute('aria-invalid', 'true');
		await expectEnvelope(page, ['output']);
		await expectBeamCaution(page);
		await screenshot(page, 'beam-waist');
		await shotOf(page, 'beam-envelope-box', 'beam-waist-drawing');
	});

	it('expands a beam 5× in at most 250 mm, and draws the focus between the parts', async () => {
		await page.goto(appUrl('/build?question=afocal'));
		await field(page, 'Input beam diameter').fill('1 mm');
		await field(page, 'Expansion').fill('5');
		await field(page, 'Longest setup').fill('250 mm');
		await page.getByRole('combobox', { name: 'Focus between the parts' }).selectOption('focus');
		await field(page, 'Beam power (optional)').fill('5 mW');
		await ask(page);
		const expansions = await page.getByTestId('expansion').allInnerTexts();
		expect(expansions.length).toBeGreaterThan(0);
		for (const e of expansions) expect(Math.abs(Number(e.replace('×', '')) / 5 - 1)).toBeLessThanOrEqual(0.02);
		for (const d of await page.getByTestId('residual-divergence').allInnerTexts()) expect(d).toMatch(/\d+\.\d{3} mrad|not traced/);
		await expectEnvelope(page, ['intermediate']);
		const caution = await expectBeamCaution(page);
		await expect(caution).toContainText(/focus between the two parts/);
		await screenshot(page, 'beam-expand');
		await shotOf(page, 'beam-envelope-box', 'beam-expand-drawing');
		// saved, its page and its sheet draw the same expander and name the focus between the parts
		await page.getByLabel('Setup name').fill('E2E 5× expander for the alignment laser');
		await page.getByRole('button', { name: 'Save as setup' }).click();
		await expect(page).toHaveURL(/\/build\/\d+$/);
		savedSetups.push(Number(new URL(page.url()).pathname.split('/').pop()));
		await expect(page.getByTestId('setup-question')).toHaveText(/Expand a 1\.00 mm beam 5× .* at most 250\.0 mm long, with a focus between the parts/);
		await expectEnvelope(page, ['intermediate']);
		await expectBeamCaution(page);
		await page.getByRole('link', { name: 'Build sheet' }).click();
		await expect(page).toHaveURL(/\/sheet$/);
		await expect(page.getByTestId('sheet-expected')).toContainText(/Gap between the parts \(vertex to vertex\) \d+\.\d\d mm/);
		await expectEnvelope(page, ['intermediate']);
		await expectBeamCaution(page);
		await screenshot(page, 'beam-expand-sheet');
	});

	it('saves a focusing setup, reserves its parts and prints the build sheet with the caution', async () => {
		await page.goto(appUrl('/build?question=beam&preset=focus&inD=2+mm&inAt=0+mm&outD=20+um&outAt=150+mm&wavelength=1064+nm&power=0.5+W&maxParts=1'));
		await expect(page.getByTestId('save-form')).toBeVisible(SOLVED);
		await page.getByLabel('Setup name').fill('E2E focus for the cutting bench');
		await page.getByRole('button', { name: 'Save as setup' }).click();
		await expect(page).toHaveURL(/\/build\/\d+$/);
		const setupId = Number(new URL(page.url()).pathname.split('/').pop());
		savedSetups.push(setupId);
		await expect(page.getByRole('heading', { level: 1 })).toContainText('E2E focus for the cutting bench');
		await expect(page.getByTestId('setup-question')).toHaveText(/Shape a beam .* Ø 20\.0 µm at z = 150\.0 mm/);
		await expectEnvelope(page, ['output']);
		await expectBeamCaution(page);
		await screenshot(page, 'beam-setup-page');
		// reserved, and the sheet names every part of the setup and a drawer that holds it
		const sheet = await reserveAndOpenSheet(page, setupId);
		await expect(sheet).toContainText(/Target waist/);
		// bench words for a beam: the incoming beam, never an object
		const words = page.locator('td[data-testid=orientation]');
		await expect(words).not.toHaveCount(0);
		for (const w of await words.allInnerTexts()) {
			expect(w).toMatch(/toward the incoming beam|either way round/);
			expect(w).not.toMatch(/object|surface \d/);
		}
		await expect(sheet).toContainText(/efficiency \d+\.\d %/);
		await expectBeamCaution(page);
		await page.emulateMedia({ media: 'print' });
		await expectEnvelope(page, ['output']);
		await screenshot(page, 'beam-sheet-print');
		await shotOf(page, 'beam-envelope-box', 'beam-sheet-print-drawing');
		await expect(page.getByRole('banner').getByRole('navigation')).toBeHidden();
		await page.emulateMedia({ media: 'screen' });
	});

	it('offers "What purchase would help?" when nothing on the shelf shapes the beam well enough', async () => {
		// One part only, and 99 % of a 0.677 mm waist 2 m on from a 2 mm beam at 1064 nm: that waist needs f ≥ 1000 mm
		// (w0′ ≤ w0·f/z_R with z_R = πw0²/λ ≈ 2.95 m; Kogelnik & Li 1966, thin-lens waist transformation), which the shelf lacks.
		await page.goto(
			appUrl('/build?question=beam&preset=waist&inD=2+mm&inAt=0+mm&m2=1&outD=0.677+mm&outAt=2000+mm&wavelength=1064+nm&minEff=99&maxParts=1')
		);
		await expect(page.getByTestId('unlock-offer')).toBeVisible(SOLVED);
		await page.getByRole('button', { name: 'Find the best single purchase' }).click();
		const suggestion = page.getByTestId('purchase-suggestion');
		await expect(suggestion).toHaveText(/Buy \d+ × \S+|No single purchase|no purchase of a catalogued part can help/, SOLVED);
		if (await page.getByTestId('suggested-sku').count()) {
			await expect(suggestion).toContainText(`× ${await page.getByTestId('suggested-sku').innerText()}`);
			// worded for a beam: its efficiency, not a magnification
			await expect(page.getByTestId('suggested-efficiency')).toHaveText(/^\d+\.\d %$/);
			await expect(suggestion).not.toContainText(/Magnification/);
		}
		await expect(page.getByTestId('laser-caution')).toContainText(/laser safety officer/);
		await screenshot(page, 'beam-purchase-suggestion');
	});

	it('fits a phone: the beam question, its answers, the setup page and the sheet', async () => {
		await page.setViewportSize(PHONE);
		try {
			await page.goto(appUrl('/build?question=beam&preset=focus&inD=2+mm&inAt=0+mm&outD=20+um&outAt=150+mm&wavelength=1064+nm'));
			await expect(page.getByTestId('beam-envelope')).toBeVisible(SOLVED);
			expect(await sidewaysOverflow(page)).toBeLessThanOrEqual(0);
			await screenshot(page, 'beam-focus-phone');
			await shotOf(page, 'beam-envelope-box', 'beam-focus-phone-drawing');
			await page.goto(appUrl('/build?question=afocal&inD=1+mm&expansion=5&maxLength=250+mm'));
			await expect(page.getByTestId('beam-envelope')).toBeVisible(SOLVED);
			expect(await sidewaysOverflow(page)).toBeLessThanOrEqual(0);
			await screenshot(page, 'beam-expand-phone');
			await shotOf(page, 'beam-envelope-box', 'beam-expand-phone-drawing');
			const id = savedSetups[0];
			expect(id).toBeGreaterThan(0);
			await page.goto(appUrl(`/build/${id}`));
			await expect(page.getByTestId('beam-envelope')).toBeVisible();
			expect(await sidewaysOverflow(page)).toBeLessThanOrEqual(0);
			await screenshot(page, 'beam-setup-phone');
			await page.goto(appUrl(`/build/${id}/sheet`));
			await expect(page.getByTestId('build-sheet')).toBeVisible();
			expect(await sidewaysOverflow(page)).toBeLessThanOrEqual(0);
			await screenshot(page, 'beam-sheet-phone');
		} finally {
			await page.setViewportSize(DESKTOP);
		}
	});
});
