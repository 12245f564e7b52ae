import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { chromium, type BrowserContext, type Locator, type Page } from 'playwright-core';
import { expect as playwrightExpect } from '@playwright/test';
import type { TwoStepUser } from './two-step';

/**
 * Playwright's `expect` (web-first assertions that retry until they pass or time out), used by the browser tests
 * under vitest instead of vitest's own: `await expect(locator).toHaveText(…)`, `toBeVisible()`, `toHaveCount(n)`,
 * `await expect(page).toHaveURL(…)`, `expect.poll(fn)` for a value read in the page. Plain values work as with
 * vitest (`expect(x).toBe(y)`). 10 s for a locator to match (two shared cores, a built app): a solver answer passes
 * its own, longer `timeout`.
 */
export const expect = playwrightExpect.configure({ timeout: 10_000 });

/** Flags for Debian's Chromium on this closed network (see STACK.md). */
export const CHROMIUM_ARGS = [
	'--headless',
	'--no-sandbox',
	'--disable-gpu',
	'--disable-quic',
	'--no-first-run',
	'--disable-background-networking',
	'--disable-component-update',
	'--disable-sync'
];

/** A fresh headless Chromium with an empty profile; close it with `close()`. `args`: extra Chromium flags (a fake camera). */
export async function openBrowser(opts: { args?: string[] } = {}): Promise<{ context: BrowserContext; page: Page; close: () => Promise<void> }> {
	const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'glasscrib-chromium-'));
	const context = await chromium.launchPersistentContext(dir, {
		executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium',
		args: [...CHROMIUM_ARGS, ...(opts.args ?? [])],
		viewport: { width: 1280, height: 860 }
	});
	const page = context.pages()[0] ?? (await context.newPage());
	// After a full page load, wait until the app has hydrated (the root layout sets html[data-ready]):
	// typing into a form before that is lost when Svelte hydrates the inputs.
	const goto = page.goto.bind(page);
	page.goto = async (url, options) => {
		const response = await goto(url, options);
		await waitUntilReady(page);
		return response;
	};
	const reload = page.reload.bind(page);
	page.reload = async (options) => {
		const response = await reload(options);
		await waitUntilReady(page);
		return response;
	};
	return {
		context,
		page,
		close: async () => {
			await context.close();
			fs.rmSync(dir, { recursive: true, force: true });
		}
	};
}

/** Asserts (retrying) the app's hydration marker; pages without the app (downloads, plain JSON) pass at once. */
export async function waitUntilReady(page: Page, timeoutMs = 10_000) {
	const isApp = await page.evaluate(() => !!document.querySelector('body > div')).catch(() => false);
	if (!isApp) return;
	await expect(page.locator('html')).toHaveAttribute('data-ready', '1', { timeout: timeoutMs });
}

/** The app under test, started by `npm test`. */
export function appUrl(pathname = '/'): string {
	const base = process.env.APP_URL;
	if (!base) throw new Error('APP_URL is not set: run the browser tests through `npm test`');
	return new URL(pathname, base).toString();
}

export const DEMO_PASSWORD = () => process.env.DEMO_PASSWORD || 'tarnwell-bench-2026';

/** Fills the sign-in form by its labels and sends it. */
export async function fillSignIn(page: Page, email: string, password: string) {
	await page.getByLabel('E-mail', { exact: true }).fill(email);
	await page.getByLabel('Password', { exact: true }).fill(password);
	await page.getByRole('button', { name: 'Sign in', exact: true }).click();
}

/** Signs in through the real form and asserts that the app let the user past sign-in. */
export async function signIn(page: Page, email: string, password = DEMO_PASSWORD()) {
	await page.goto(appUrl('/signin'));
	await fillSignIn(page, email, password);
	await expect(page).not.toHaveURL(/\/signin/);
	await waitUntilReady(page);
}

/**
 * Signs a user with two-step sign-in in through the real forms: password, then the code page with a
 * code computed from the user's known secret (see tests/support/two-step.ts); waits until past sign-in.
 */
export async function signInWithCode(page: Page, user: Pick<TwoStepUser, 'email' | 'password' | 'freshCode'>) {
	await page.goto(appUrl('/signin'));
	await fillSignIn(page, user.email, user.password);
	await expect(page).toHaveURL(/\/signin\/code/);
	await waitUntilReady(page);
	await page.getByLabel('Code', { exact: true }).fill(await user.freshCode());
	await page.getByRole('button', { name: 'Continue' }).click();
	await expect(page).not.toHaveURL(/\/signin/);
	await waitUntilReady(page);
}

/**
 * The body rows of a table as records keyed by the column headers' names (never by position), e.g.
 * `{ SKU: 'E2E-…', Kind: 'Plano-convex', 'On hand': '4' }`; rows that do not span every column (a "nothing
 * found" row) are left out. Read it through `expect.poll`, which reads it again until the table has settled:
 * `await expect.poll(() => tableRows(table)).toContainEqual(expect.objectContaining({ SKU: sku }))`.
 */
export async function tableRows(table: Locator): Promise<Record<string, string>[]> {
	return table.evaluate((t) => {
		const text = (e: Element) => (e as HTMLElement).innerText.replace(/[▲▼]/g, '').replace(/\s+/g, ' ').trim();
		const heads = [...t.querySelectorAll('thead th')].map(text);
		return [...t.querySelectorAll('tbody tr')]
			.filter((tr) => tr.children.length === heads.length)
			.map((tr) => Object.fromEntries(heads.map((h, i) => [h, text(tr.children[i])])));
	});
}

/** The texts of the column named `header`, top to bottom (see `tableRows`). */
export async function columnTexts(table: Locator, header: string): Promise<string[]> {
	const rows = await tableRows(table);
	if (rows.length && !(header in rows[0])) throw new Error(`no column "${header}" in ${JSON.stringify(Object.keys(rows[0]))}`);
	return rows.map((r) => r[header]);
}

/** Saves a screenshot under TEST_TMP (or the OS temp dir) and returns its path. */
export async function screenshot(page: Page, name: string) {
	const dir = path.join(process.env.SCREENSHOT_DIR || process.env.TEST_TMP || os.tmpdir(), 'screenshots');
	fs.mkdirSync(dir, { recursive: true });
	const file = path.join(dir, `${name}.png`);
	await page.screenshot({ path: file, fullPage: true });
	return file;
}

/** One row (a `tr` locator) as a record keyed by its table's column headers, like a row of `tableRows`. */
export async function rowRecord(row: Locator): Promise<Record<string, string>> {
	return row.evaluate((tr) => {
		const text = (e: Element) => (e as HTMLElement).innerText.replace(/[▲▼]/g, '').replace(/\s+/g, ' ').trim();
		const heads = [...(tr.closest('table')?.querySelectorAll('thead th') ?? [])].map(text);
		return Object.fromEntries(heads.map((h, i) => [h, tr.children[i] ? text(tr.children[i]) : '']));
	});
}
