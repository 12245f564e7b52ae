import { afterAll, beforeAll, describe, it } from 'vitest';
import type { Page } from 'playwright-core';
import { appUrl, DEMO_PASSWORD, expect, fillSignIn, openBrowser, screenshot, signIn, signInWithCode } from '../../support/browser';
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
		await fillSignIn(page, 'engineer@tarnwell.example', 'not the right one');
		await expect(page.getByRole('alert')).toContainText('do not match an active account');
		await expect(page.getByLabel('E-mail', { exact: true })).toHaveValue('engineer@tarnwell.example');
		await expect(page).toHaveURL(/\/signin/);
		const password = page.getByLabel('Password', { exact: true });
		await expect(password).toHaveAttribute('type', 'password');
		await page.getByRole('button', { name: 'Show' }).click();
		await expect(password).toHaveAttribute('type', 'text');
		await screenshot(page, 'accounts-signin-error');
	});

	it('signs in through the real form and reaches the account page from the user name', async () => {
		await signIn(page, 'engineer@tarnwell.example');
		await expect(page).toHaveURL(appUrl('/'));
		const nav = page.getByRole('navigation', { name: 'Main' });
		await expect(nav.getByRole('link', { name: 'Catalogue' })).toBeVisible();
		await expect(nav).not.toContainText('Users');
		await expect(nav).not.toContainText('Admin');
		await page.getByTestId('user-menu').click();
		await expect(page).toHaveURL(/\/account$/);
		const name = `e2e script ${Date.now().toString(36)}`;
		await page.getByLabel('Name', { exact: true }).fill(name);
		await page.getByLabel('Your current password (to confirm)', { exact: true }).fill(DEMO_PASSWORD());
		await page.getByRole('button', { name: 'Create token' }).click();
		await expect(page.getByTestId('new-token-value')).toHaveText(/^gc_/);
		await expect(page.getByTestId('token-table').getByRole('row').filter({ hasText: name })).toHaveCount(1);
		await screenshot(page, 'accounts-account-token');
		const res = await page.goto(appUrl('/admin/users'));
		expect(res?.status()).toBe(403);
	});

	it('shows the admin the users table and the outbox', async () => {
		await page.context().clearCookies();
		// The admin pages need two-step sign-in: a throwaway administrator who has it (tests/support/two-step.ts).
		await signInWithCode(page, await twoStepAdmin(db, 'e2e-accounts'));
		await expect(page.getByRole('navigation', { name: 'Main' })).toContainText('Admin');
		await page.goto(appUrl('/admin/users'));
		const adminTabs = page.getByRole('navigation', { name: 'Admin' });
		await expect(adminTabs.getByRole('link', { name: 'Users' })).toBeVisible();
		await expect(adminTabs.getByRole('link', { name: 'Outbox' })).toBeVisible();
		const email = `sela-${Date.now().toString(36)}@tarnwell.example`;
		await page.getByLabel('Name', { exact: true }).fill('Sela Marrowby');
		await page.getByLabel('E-mail', { exact: true }).fill(email);
		await page.getByLabel('Role', { exact: true }).selectOption('stockroom');
		await page.getByRole('button', { name: 'Send invitation', exact: true }).click(); // not the rows' "Send invitation again"
		await expect(page.getByRole('status').filter({ hasText: 'Invitation sent to' })).toBeVisible();
		await expect(page.getByTestId('user-table').getByRole('row').filter({ hasText: email })).toContainText('Sela Marrowby');
		await screenshot(page, 'accounts-admin-users');
		// The invitation to that address reaches the outbox (the mail catcher stores it after the request): reload until it is listed.
		const invitation = page.getByTestId('outbox-table').getByRole('row').filter({ hasText: email });
		await expect(async () => {
			await page.goto(appUrl('/admin/outbox'));
			await expect(invitation).toHaveCount(1, { timeout: 1000 });
		}).toPass({ timeout: 20_000 });
		await screenshot(page, 'accounts-outbox');
		await invitation.getByRole('link').click();
		await expect(page.getByTestId('message-text')).toContainText('/welcome/');
		await screenshot(page, 'accounts-outbox-message');
	});

	it('signs out on the server: the account page then sends to sign-in', async () => {
		await page.getByRole('banner').getByRole('button', { name: 'Sign out' }).click();
		await expect(page).toHaveURL(/\/signin$/);
		await page.goto(appUrl('/account'));
		await expect(page).toHaveURL(/\/signin(\?|$)/);
	});

	it('shows the sign-in page, not a cached copy, on Back after signing out (SECURITY.md 8.1.1)', async () => {
		await page.context().clearCookies();
		await signIn(page, 'engineer@tarnwell.example');
		await page.goto(appUrl('/parts'));
		await expect(page.getByRole('heading', { level: 1 })).toHaveText('Catalogue');
		await expect(page.getByTestId('parts-table')).toBeVisible();
		await page.getByRole('banner').getByRole('button', { name: 'Sign out' }).click();
		await expect(page).toHaveURL(/\/signin$/);
		await page.goBack();
		// Pages are sent with Cache-Control: no-store, so Back asks the server again, which sends to sign-in.
		await expect(page).toHaveURL(/\/signin(\?|$)/);
		await expect(page.getByRole('heading', { level: 1 })).toContainText('Sign in');
		await expect(page.getByTestId('parts-table')).toHaveCount(0);
	});
});
