import { afterAll, beforeAll, describe, it } from 'vitest';
import type { Page } from 'playwright-core';
import { eq, like } from 'drizzle-orm';
import { Secret } from 'otpauth';
import { appUrl, expect, fillSignIn, openBrowser, screenshot, signIn } from '../../support/browser';
import { testDb } from '../../support/env';
import { signinFailures, users } from '../../../src/lib/server/db/schema';
import { hashPassword } from '../../../src/lib/server/auth/password';
import { codeAt } from '../../../src/lib/server/auth/totp';

const EMAIL = 'two-step-e2e-admin@tarnwell.example';
const PASSWORD = 'quartz wedge beside the lamp';

describe('two-step sign-in in Chromium', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	let secret: Uint8Array;
	const { db, pool } = testDb();

	beforeAll(async () => {
		// An administrator of this file without two-step sign-in, like the demo admin on first visit.
		const passwordHash = await hashPassword(PASSWORD, process.env.AUTH_PEPPER);
		const off = { totpSecret: null, totpEnabledAt: null, totpLastStep: null, totpPendingSecret: null };
		await db
			.insert(users)
			.values({ email: EMAIL, name: 'Orrin Vaskel', role: 'admin', passwordHash, ...off })
			.onDuplicateKeyUpdate({ set: { role: 'admin', status: 'active', passwordHash, ...off } });
		browser = await openBrowser();
		page = browser.page;
	});
	afterAll(async () => {
		await browser?.close();
		await db.update(users).set({ status: 'disabled' }).where(eq(users.email, EMAIL));
		await db.delete(signinFailures).where(like(signinFailures.bucket, 'totp:%'));
		await pool.end();
	});

	it('sends an administrator without it from the admin pages to the set-up on the account page', async () => {
		await signIn(page, EMAIL, PASSWORD);
		const res = await page.goto(appUrl('/admin/users'));
		expect(res?.status()).toBe(403);
		await expect(page.getByTestId('two-step-needed').getByRole('heading', { level: 1 })).toHaveText('Two-step sign-in needed');
		// guidance, not a red error (issue 16)
		await expect(page.locator('body')).not.toContainText(/Error 403|403/);
		await screenshot(page, 'two-step-admin-needs-it');
		await page.setViewportSize({ width: 390, height: 844 });
		await screenshot(page, 'two-step-admin-needs-it-phone');
		await page.setViewportSize({ width: 1280, height: 860 });
		await page.getByRole('link', { name: 'Set up two-step sign-in' }).click();
		await expect(page).toHaveURL(/\/account(#two-step)?$/);
		await expect(page.getByTestId('two-step-state')).toHaveText('off');
	});

	it('sets it up from the QR code’s key and a code, and then opens the admin pages', async () => {
		await page.getByRole('button', { name: 'Set up two-step sign-in' }).click();
		const qr = page.getByRole('img', { name: /^QR code that adds Glasscrib/ });
		await expect(qr).toHaveAttribute('src', /^data:image\/png;base64,/);
		const key = (await page.getByTestId('two-step-secret').innerText()).replace(/\s/g, '');
		expect(key).toMatch(/^[A-Z2-7]{32}$/); // 20 bytes in base32
		secret = new Uint8Array(Secret.fromBase32(key).bytes);
		await screenshot(page, 'two-step-setup');
		await page.setViewportSize({ width: 390, height: 844 });
		await screenshot(page, 'two-step-setup-phone');
		await page.setViewportSize({ width: 1280, height: 860 });

		const code = page.getByLabel('Code', { exact: true });
		await code.fill('000000' === codeAt(secret, Date.now()) ? '111111' : '000000');
		await page.getByRole('button', { name: 'Turn on' }).click();
		await expect(code).toHaveAccessibleDescription(/not right/);
		await expect(page.getByTestId('two-step-state')).not.toHaveText('on');

		await code.fill(codeAt(secret, Date.now()));
		await page.getByRole('button', { name: 'Turn on' }).click();
		await expect(page.getByTestId('two-step-done')).toBeVisible();
		await expect(page.getByTestId('two-step-state')).toHaveText('on');
		await screenshot(page, 'two-step-on');
		const res = await page.goto(appUrl('/admin/users'));
		expect(res?.status()).toBe(200);
		await expect(page.getByTestId("user-table").getByRole("row").filter({ hasText: EMAIL }).getByTestId("two-step-cell")).toHaveText("on");
	});

	it('asks for the code at the next sign-in, and goes on where the person wanted to go', async () => {
		await page.getByRole('banner').getByRole('button', { name: 'Sign out' }).click();
		await expect(page).toHaveURL(/\/signin$/);
		await page.goto(appUrl('/admin/outbox'));
		await fillSignIn(page, EMAIL, PASSWORD);
		await expect(page).toHaveURL(/\/signin\/code\?/);
		expect(new URL(page.url()).searchParams.get('redirectTo')).toBe('/admin/outbox');
		await expect(page.getByRole('navigation', { name: 'Main' })).toHaveCount(0);
		await screenshot(page, 'two-step-signin-code');
		await page.setViewportSize({ width: 390, height: 844 });
		await screenshot(page, 'two-step-signin-code-phone');
		await page.setViewportSize({ width: 1280, height: 860 });
		// Anything else sends back to the code page.
		await page.goto(appUrl('/parts'));
		await expect(page).toHaveURL(/\/signin\/code(\?|$)/);
		// The code of the set-up was spent: the next step's code (accepted within ±1 step) signs in.
		await page.getByLabel('Code', { exact: true }).fill(codeAt(secret, Date.now() + 30_000));
		await page.getByRole('button', { name: 'Continue' }).click();
		await expect(page).toHaveURL(/\/parts(\?|$)/);
		await page.goto(appUrl('/admin/outbox'));
		await expect(page.getByTestId('outbox-table')).toBeVisible();
	});
});
