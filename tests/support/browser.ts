import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import type { TwoStepUser } from './two-step';

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

/** Waits for the app's hydration marker; pages without it (downloads, plain JSON) pass after a short wait. */
export async function waitUntilReady(page: Page, timeoutMs = 10_000) {
	const isApp = await page.evaluate(() => !!document.querySelector('body > div')).catch(() => false);
	if (!isApp) return;
	await page.waitForFunction(() => document.documentElement.dataset.ready === '1', null, { timeout: timeoutMs });
}

/** The app under test, started by `npm test`. */
export function appUrl(pathname = '/'): string {
	const base = process.env.APP_URL;
	if (!base) throw new Error('APP_URL is not set: run the browser tests through `npm test`');
	return new URL(pathname, base).toString();
}

export const DEMO_PASSWORD = () => process.env.DEMO_PASSWORD || 'tarnwell-bench-2026';

/** Signs in through the real form and waits for the overview. */
export async function signIn(page: Page, email: string, password = DEMO_PASSWORD()) {
	await page.goto(appUrl('/signin'));
	await page.fill('input[name=email]', email);
	await page.fill('input[name=password]', password);
	await Promise.all([page.waitForURL((u) => !u.pathname.startsWith('/signin')), page.click('button:has-text("Sign in")')]);
}

/**
 * Signs a user with two-step sign-in in through the real forms: password, then the code page with a
 * code computed from the user's known secret (see tests/support/two-step.ts); waits until past sign-in.
 */
export async function signInWithCode(page: Page, user: Pick<TwoStepUser, 'email' | 'password' | 'freshCode'>) {
	await page.goto(appUrl('/signin'));
	await page.fill('input[name=email]', user.email);
	await page.fill('input[name=password]', user.password);
	await Promise.all([page.waitForURL((u) => u.pathname === '/signin/code'), page.click('button:has-text("Sign in")')]);
	await waitUntilReady(page);
	await page.fill('input[name=code]', await user.freshCode());
	await Promise.all([page.waitForURL((u) => !u.pathname.startsWith('/signin')), page.click('button:has-text("Continue")')]);
}

/** Saves a screenshot under TEST_TMP (or the OS temp dir) and returns its path. */
export async function screenshot(page: Page, name: string) {
	const dir = path.join(process.env.SCREENSHOT_DIR || process.env.TEST_TMP || os.tmpdir(), 'screenshots');
	fs.mkdirSync(dir, { recursive: true });
	const file = path.join(dir, `${name}.png`);
	await page.screenshot({ path: file, fullPage: true });
	return file;
}
