import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chromium, type Browser, type Page } from 'playwright-core';
import { asc, count, desc, eq } from 'drizzle-orm';
import { appUrl, CHROMIUM_ARGS, DEMO_PASSWORD, openBrowser, screenshot, signInWithCode } from '../../support/browser';
import { twoStepAdmin } from '../../support/two-step';
import { testDb } from '../../support/env';
import { movements, parts } from '../../../src/lib/server/db/schema';

const { db, pool } = testDb();
const PHONE = { width: 390, height: 844 };

/** How far the page itself scrolls sideways (0 when only the tables scroll inside their boxes). */
const sidewaysOverflow = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);

describe('the app on a phone (390 × 844) in Chromium', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	let ledgerPartId = 0;

	beforeAll(async () => {
		// The demo part with the longest ledger: its page has the widest table.
		const [row] = await db
			.select({ partId: movements.partId, n: count() })
			.from(movements)
			.innerJoin(parts, eq(parts.id, movements.partId))
			.groupBy(movements.partId)
			.orderBy(desc(count()), asc(movements.partId))
			.limit(1);
		ledgerPartId = row.partId;
		browser = await openBrowser();
		page = browser.page;
		await page.setViewportSize(PHONE);
		// An administrator with two-step sign-in, so /admin/users shows its table (the demo admin sees the set-up page).
		await signInWithCode(page, await twoStepAdmin(db, 'e2e-phone'));
	});
	afterAll(async () => {
		await browser?.close();
		await pool.end();
	});

	it('shows a compact header whose menu opens the navigation as a list', async () => {
		await page.goto(appUrl('/stock'));
		const toggle = page.locator('[data-testid=menu-toggle]');
		const nav = page.locator('nav[aria-label=Main]');
		expect((await page.locator('header').boundingBox())!.height).toBeLessThan(70);
		await expect(nav.isVisible()).resolves.toBe(false);
		await expect.poll(() => toggle.getAttribute('aria-expanded')).toBe('false');
		await expect(page.locator('header button:has-text("Sign out")').isVisible()).resolves.toBe(false);

		await toggle.click();
		await expect.poll(() => toggle.getAttribute('aria-expanded')).toBe('true');
		await expect(nav.isVisible()).resolves.toBe(true);
		// One link per line: each link starts at the same x, below the one before.
		const boxes = await nav.locator('a').evaluateAll((links) => links.map((a) => a.getBoundingClientRect()).map((r) => ({ x: r.x, y: r.y, h: r.height })));
		expect(boxes.length).toBeGreaterThanOrEqual(8);
		for (let i = 1; i < boxes.length; i++) {
			expect(boxes[i].x).toBe(boxes[0].x);
			expect(boxes[i].y).toBeGreaterThanOrEqual(boxes[i - 1].y + boxes[i - 1].h - 1);
		}
		// "Build from stock" and "Sign out" stay on one line each.
		const build = (await nav.locator('a:has-text("Build from stock")').boundingBox())!;
		expect(build.height).toBeLessThan(48);
		const signOut = page.locator('header button:has-text("Sign out")');
		await expect(signOut.isVisible()).resolves.toBe(true);
		expect((await signOut.boundingBox())!.height).toBeLessThan(30);
		await screenshot(page, 'phone-menu-open');

		// Escape closes it and gives the focus back to the toggle; the keyboard opens it again.
		await page.keyboard.press('Escape');
		await expect(nav.isVisible()).resolves.toBe(false);
		await expect.poll(() => toggle.getAttribute('aria-expanded')).toBe('false');
		await expect(page.evaluate(() => document.activeElement?.getAttribute('data-testid'))).resolves.toBe('menu-toggle');
		await page.keyboard.press('Enter');
		await expect(nav.isVisible()).resolves.toBe(true);
		await page.keyboard.press('Tab');
		await expect(page.evaluate(() => document.activeElement?.textContent?.trim())).resolves.toBe('Overview');

		// Following a link closes the menu.
		await Promise.all([page.waitForURL((u) => u.pathname === '/parts'), nav.locator('a:has-text("Catalogue")').click()]);
		await expect(nav.isVisible()).resolves.toBe(false);
		await expect.poll(() => toggle.getAttribute('aria-expanded')).toBe('false');
	});

	it('keeps the full navigation in the header on a wide screen', async () => {
		await page.setViewportSize({ width: 1280, height: 860 });
		try {
			await page.goto(appUrl('/stock'));
			await expect(page.locator('[data-testid=menu-toggle]').isVisible()).resolves.toBe(false);
			await expect(page.locator('nav[aria-label=Main]').isVisible()).resolves.toBe(true);
			const header = (await page.locator('header').boundingBox())!;
			expect(header.height).toBeLessThan(70);
		} finally {
			await page.setViewportSize(PHONE);
		}
	});

	it('scrolls only the tables sideways, never the page', async () => {
		const paths = ['/', '/parts', `/parts/${ledgerPartId}`, '/stock', '/locations', '/reorder', '/requests', '/imports', '/admin/users'];
		const wide: string[] = [];
		for (const path of paths) {
			await page.goto(appUrl(path));
			await page.waitForLoadState('networkidle');
			const over = await sidewaysOverflow(page);
			if (over > 0) wide.push(`${path}: ${over} px too wide`);
			if (path === '/admin/users') await expect(page.locator('[data-testid=user-table]').count()).resolves.toBe(1); // the page itself, not the set-up notice
		}
		expect(wide).toEqual([]);
		// The ledger really is wider than the phone: it scrolls inside its own box.
		await page.goto(appUrl(`/parts/${ledgerPartId}`));
		const ledger = await page.locator('[data-testid=ledger]').evaluate((t) => ({ table: t.scrollWidth, box: t.parentElement!.clientWidth, overflow: getComputedStyle(t.parentElement!).overflowX }));
		expect(ledger.table).toBeGreaterThan(ledger.box);
		expect(ledger.overflow).toBe('auto');
		await screenshot(page, 'phone-part-page');
	});

	it('opens the menu and follows its links without JavaScript', async () => {
		const plain: Browser = await chromium.launch({ executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium', args: CHROMIUM_ARGS });
		try {
			const context = await plain.newContext({ viewport: PHONE, javaScriptEnabled: false });
			const p = await context.newPage();
			await p.goto(appUrl('/signin'));
			await p.fill('input[name=email]', 'stockroom@tarnwell.example');
			await p.fill('input[name=password]', DEMO_PASSWORD());
			await Promise.all([p.waitForURL((u) => !u.pathname.startsWith('/signin')), p.click('button:has-text("Sign in")')]);
			const nav = p.locator('nav[aria-label=Main]');
			await expect(nav.isVisible()).resolves.toBe(false);
			await p.click('[data-testid=menu-toggle]');
			await expect(nav.isVisible()).resolves.toBe(true);
			await Promise.all([p.waitForURL((u) => u.pathname === '/stock'), nav.locator('a[href="/stock"]').click()]);
			await expect(p.locator('h1').innerText()).resolves.toBe('Stock');
		} finally {
			await plain.close();
		}
	});
});
