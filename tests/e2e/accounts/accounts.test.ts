import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { appUrl, DEMO_PASSWORD, openBrowser, screenshot, signIn, signInWithCode } from '../../support/browser';
import { testDb } from '../../support/env';
import { twoStepAdmin } from '../../support/two-step';
import { signinFailures } from '../../../src/lib/server/db/schema';

describe('accounts in Chromium', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	const { db, pool } = testDb();
	beforeAll(async () => {
		await db.delete(signinFailures);
		browser = await openBrowser();
		page = browser.page;
	});
	afterAll(async () => {
		await browser?.close();
		await db.delete(signinFailures);
		await pool.end();
	});

	it('says clearly when e-mail and password do not match, keeping the e-mail', async () => {
		await page.goto(appUrl('/signin'));
		await page.fill('input[name=email]', 'engineer@tarnwell.example');
		await page.fill('input[name=password]', 'not the right one');
		await page.click('button:has-text("Sign in")');
		await page.waitForSelector('[data-testid=signin-error]');
		expect(await page.locator('[data-testid=signin-error]').innerText()).toContain('do not match an active account');
		expect(await page.inputValue('input[name=email]')).toBe('engineer@tarnwell.example');
		await page.click('button:has-text("Show")');
		expect(await page.getAttribute('input[name=password]', 'type')).toBe('text');
		await screenshot(page, 'accounts-signin-error');
	});

	it('signs in through the real form and reaches the account page from the user name', async () => {
		await signIn(page, 'engineer@tarnwell.example');
		expect(new URL(page.url()).pathname).toBe('/');
		const nav = await page.locator('nav[aria-label=Main]').innerText();
		expect(nav).not.toContain('Users');
		expect(nav).not.toContain('Admin');
		await page.click('[data-testid=user-menu]');
		await page.waitForURL((u) => u.pathname === '/account');
		await page.fill('#token-name', 'e2e script');
		await page.fill('#token-password', DEMO_PASSWORD());
		await page.click('button:has-text("Create token")');
		await page.waitForSelector('[data-testid=new-token-value]');
		expect(await page.locator('[data-testid=new-token-value]').innerText()).toMatch(/^gc_/);
		expect(await page.locator('[data-testid=token-table]').innerText()).toContain('e2e script');
		await screenshot(page, 'accounts-account-token');
		const res = await page.goto(appUrl('/admin/users'));
		expect(res?.status()).toBe(403);
	});

	it('shows the admin the users table and the outbox', async () => {
		await page.context().clearCookies();
		// The admin pages need two-step sign-in: a throwaway administrator who has it (tests/support/two-step.ts).
		await signInWithCode(page, await twoStepAdmin(db, 'e2e-accounts'));
		const nav = await page.locator('nav[aria-label=Main]').innerText();
		expect(nav).toContain('Admin');
		await page.goto(appUrl('/admin/users'));
		const adminTabs = await page.locator('nav[aria-label=Admin]').innerText();
		expect(adminTabs).toContain('Users');
		expect(adminTabs).toContain('Outbox');
		await page.fill('#invite-name', 'Sela Marrowby');
		await page.fill('#invite-email', `sela-${Date.now()}@tarnwell.example`);
		await page.selectOption('#invite-role', 'stockroom');
		await page.click('button:text-is("Send invitation")'); // not the rows' "Send invitation again"
		await page.waitForSelector('text=Invitation sent to');
		expect(await page.locator('[data-testid=user-table]').innerText()).toContain('Sela Marrowby');
		await screenshot(page, 'accounts-admin-users');
		await page.goto(appUrl('/admin/outbox'));
		await page.waitForSelector('[data-testid=outbox-table]');
		await screenshot(page, 'accounts-outbox');
		await page.click('[data-testid=outbox-table] a >> nth=0');
		await page.waitForSelector('[data-testid=message-text]');
		expect(await page.locator('[data-testid=message-text]').innerText()).toContain('/welcome/');
		await screenshot(page, 'accounts-outbox-message');
	});

	it('signs out on the server: the account page then sends to sign-in', async () => {
		await page.click('button:has-text("Sign out")');
		await page.waitForURL((u) => u.pathname === '/signin');
		await page.goto(appUrl('/account'));
		expect(new URL(page.url()).pathname).toBe('/signin');
	});

	it('shows the sign-in page, not a cached copy, on Back after signing out (SECURITY.md 8.1.1)', async () => {
		await page.context().clearCookies();
		await signIn(page, 'engineer@tarnwell.example');
		await page.goto(appUrl('/parts'));
		await page.waitForSelector('table');
		expect(await page.locator('main').innerText()).toContain('TW-');
		await Promise.all([page.waitForURL((u) => u.pathname === '/signin'), page.click('header button:has-text("Sign out")')]);
		await page.goBack();
		await page.waitForLoadState('domcontentloaded');
		// Pages are sent with Cache-Control: no-store, so Back asks the server again, which sends to sign-in.
		expect(new URL(page.url()).pathname).toBe('/signin');
		expect(await page.locator('body').innerText()).not.toContain('TW-');
	});
});
