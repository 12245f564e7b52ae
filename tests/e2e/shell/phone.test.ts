import { afterAll, beforeAll, describe, it } from 'vitest';
import { chromium, type Browser, type Page } from 'playwright-core';
import { appUrl, CHROMIUM_ARGS, DEMO_PASSWORD, expect, fillSignIn, openBrowser, screenshot, signInWithCode } from '../../support/browser';
import { twoStepAdmin } from '../../support/two-step';
import { testDb } from '../../support/env';
import { Fixtures } from '../../support/fixtures';

const { db, pool } = testDb();
const PHONE = { width: 390, height: 844 };

/** How far the page itself scrolls sideways (0 when only the tables scroll inside their boxes). */
const sidewaysOverflow = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);

describe('the app on a phone (390 × 844) in Chromium', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	let ledgerPartId = 0;
	let fx: Fixtures;

	beforeAll(async () => {
		// A part of this file's own with a ledger of several deliveries into two drawers, with notes: its page has
		// the widest table.
		fx = await Fixtures.open('E2E-PHONE');
		const drawers = [await fx.location('D1', 'Phone test drawer, cabinet by the window'), await fx.location('D2', 'Phone test drawer, cabinet by the door')];
		({ id: ledgerPartId } = await fx.part('LEDGER', { name: 'Phone test condenser with a long ledger' }));
		for (let k = 0; k < 6; k++) await fx.receive(ledgerPartId, drawers[k % 2].id, 1 + k, `delivery ${k + 1} of the phone test, checked against the packing list`);
		browser = await openBrowser();
		page = browser.page;
		await page.setViewportSize(PHONE);
		// An administrator with two-step sign-in, so /admin/users shows its table (the demo admin sees the set-up page).
		await signInWithCode(page, await twoStepAdmin(db, 'e2e-phone'));
	});
	afterAll(async () => {
		await browser?.close();
		await fx?.cleanup();
		await pool.end();
	});

	it('shows a compact header whose menu opens the navigation as a list', async () => {
		await page.goto(appUrl('/stock'));
		const toggle = page.getByTestId('menu-toggle');
		const nav = page.getByRole('navigation', { name: 'Main' });
		const signOut = page.getByRole('banner').getByRole('button', { name: 'Sign out' });
		expect((await page.getByRole('banner').boundingBox())!.height).toBeLessThan(70);
		await expect(nav).toBeHidden();
		await expect(toggle).toHaveAttribute('aria-expanded', 'false');
		await expect(signOut).toBeHidden();

		await toggle.click();
		await expect(toggle).toHaveAttribute('aria-expanded', 'true');
		await expect(nav).toBeVisible();
		// One link per line: each link starts at the same x, below the one before.
		const boxes = await nav.getByRole('link').evaluateAll((links) => links.map((a) => a.getBoundingClientRect()).map((r) => ({ x: r.x, y: r.y, h: r.height })));
		expect(boxes.length).toBeGreaterThanOrEqual(8);
		for (let i = 1; i < boxes.length; i++) {
			expect(boxes[i].x).toBe(boxes[0].x);
			expect(boxes[i].y).toBeGreaterThanOrEqual(boxes[i - 1].y + boxes[i - 1].h - 1);
		}
		// "Build from stock" and "Sign out" stay on one line each.
		const build = (await nav.getByRole('link', { name: 'Build from stock' }).boundingBox())!;
		expect(build.height).toBeLessThan(48);
		await expect(signOut).toBeVisible();
		expect((await signOut.boundingBox())!.height).toBeLessThan(30);
		await screenshot(page, 'phone-menu-open');

		// Escape closes it and gives the focus back to the toggle; the keyboard opens it again.
		await page.keyboard.press('Escape');
		await expect(nav).toBeHidden();
		await expect(toggle).toHaveAttribute('aria-expanded', 'false');
		await expect(toggle).toBeFocused();
		await page.keyboard.press('Enter');
		await expect(nav).toBeVisible();
		await page.keyboard.press('Tab');
		await expect(nav.getByRole('link', { name: 'Overview' })).toBeFocused();

		// Following a link closes the menu.
		await nav.getByRole('link', { name: 'Catalogue' }).click();
		await expect(page).toHaveURL(/\/parts$/);
		await expect(nav).toBeHidden();
		await expect(toggle).toHaveAttribute('aria-expanded', 'false');
	});

	it('keeps the full navigation in the header on a wide screen', async () => {
		await page.setViewportSize({ width: 1280, height: 860 });
		try {
			await page.goto(appUrl('/stock'));
			await expect(page.getByTestId('menu-toggle')).toBeHidden();
			await expect(page.getByRole('navigation', { name: 'Main' })).toBeVisible();
			const header = (await page.getByRole('banner').boundingBox())!;
			expect(header.height).toBeLessThan(70);
		} finally {
			await page.setViewportSize(PHONE);
		}
	});

	it('scrolls only the tables sideways, never the page', async () => {
		const paths = ['/', '/parts', `/parts/${ledgerPartId}`, '/stock', '/locations', '/reorder', '/requests', '/imports', '/admin/users'];
		for (const path of paths) {
			await page.goto(appUrl(path));
			await expect(page.getByRole('main')).toBeVisible();
			if (path === '/admin/users') await expect(page.getByTestId('user-table')).toHaveCount(1); // the page itself, not the set-up notice
			await expect.poll(() => sidewaysOverflow(page), { message: `${path} is wider than the phone (px)` }).toBeLessThanOrEqual(0);
		}
		// The ledger really is wider than the phone: it scrolls inside its own box.
		await page.goto(appUrl(`/parts/${ledgerPartId}`));
		const ledger = page.getByTestId('ledger');
		await expect(ledger.getByRole('row').filter({ hasText: 'delivery 6 of the phone test' })).toHaveCount(1);
		const size = await ledger.evaluate((t) => ({ table: t.scrollWidth, box: t.parentElement!.clientWidth, overflow: getComputedStyle(t.parentElement!).overflowX }));
		expect(size.table).toBeGreaterThan(size.box);
		expect(size.overflow).toBe('auto');
		await screenshot(page, 'phone-part-page');
	});

	it('opens the menu and follows its links without JavaScript', async () => {
		const plain: Browser = await chromium.launch({ executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium', args: CHROMIUM_ARGS });
		try {
			const context = await plain.newContext({ viewport: PHONE, javaScriptEnabled: false });
			const p = await context.newPage();
			await p.goto(appUrl('/signin'));
			await fillSignIn(p, 'stockroom@tarnwell.example', DEMO_PASSWORD());
			await expect(p).not.toHaveURL(/\/signin/);
			const nav = p.getByRole('navigation', { name: 'Main' });
			await expect(nav).toBeHidden();
			await p.getByTestId('menu-toggle').click();
			await expect(nav).toBeVisible();
			await nav.getByRole('link', { name: 'Stock', exact: true }).click();
			await expect(p).toHaveURL(/\/stock$/);
			await expect(p.getByRole('heading', { level: 1 })).toHaveText('Stock');
		} finally {
			await plain.close();
		}
	});
});
