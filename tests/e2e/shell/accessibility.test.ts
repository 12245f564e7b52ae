/**
 * Accessibility: axe-core runs over every page for every role (and the public pages signed out), with the WCAG 2.x
 * A and AA rules, and finds no serious or critical violation. A page a role may not open is checked as that role sees
 * it (the error page). The fixtures the pages need (a setup, an import, a purchase request, an outbox message) are
 * made here and removed at the end.
 * Rule set: axe-core's `wcag2a`, `wcag2aa`, `wcag21a`, `wcag21aa` tags (Deque, axe-core rule descriptions, 2025);
 * "serious or critical" is axe-core's own impact scale.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { AxeBuilder } from '@axe-core/playwright';
import { desc, inArray } from 'drizzle-orm';
import { appUrl, openBrowser, signIn } from '../../support/browser';
import { testDb } from '../../support/env';
import { Fixtures } from '../../support/fixtures';
import * as t from '../../../src/lib/server/db/schema';

const { db, pool } = testDb();
const ROLES = ['admin', 'stockroom', 'engineer', 'purchaser'] as const;
const tag = `AX${Date.now().toString(36).toUpperCase()}`;

/** Every page of the app, with the ids of this run's fixtures filled in. */
function pages(ids: { part: number; setup: number; importId: number; request: number; outbox: number; location: number }): string[] {
	return [
		'/',
		'/account',
		'/parts',
		`/parts/${ids.part}`,
		`/parts/${ids.part}/edit`,
		'/parts/new',
		'/stock',
		'/locations',
		'/labels',
		'/scan',
		'/stock-take',
		`/stock-take/${ids.location}`,
		'/build',
		'/build?mode=beam',
		'/build?mode=afocal',
		'/build/setups',
		`/build/${ids.setup}`,
		`/build/${ids.setup}/sheet`,
		'/imports',
		'/imports/new',
		`/imports/${ids.importId}`,
		'/imports/datasheets',
		'/reorder',
		'/reorder/parts',
		`/reorder/parts/${ids.part}`,
		'/requests',
		`/requests/${ids.request}`,
		'/admin/users',
		'/admin/outbox',
		`/admin/outbox/${ids.outbox}`,
		'/admin/settings'
	];
}

async function seriousViolations(page: Page): Promise<string[]> {
	const result = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
	return result.violations
		.filter((v) => v.impact === 'serious' || v.impact === 'critical')
		.map((v) => `${v.id} (${v.impact}): ${v.help} — ${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join(' | ')}${v.nodes.length > 3 ? ` and ${v.nodes.length - 3} more` : ''}`);
}

describe('accessibility (axe-core) of every page for every role', () => {
	let browser: Awaited<ReturnType<typeof openBrowser>>;
	let page: Page;
	const made = { setups: [] as number[], requests: [] as number[], outbox: [] as number[], imports: [] as number[] };
	let ids: Parameters<typeof pages>[0];
	let fx: Fixtures;

	beforeAll(async () => {
		browser = await openBrowser();
		page = browser.page;
		const origin = new URL(appUrl('/')).origin;
		// A part with stock in a drawer, both of this file's own (the stockroom makes them through the API).
		fx = await Fixtures.open('AX');
		const location = await fx.location('D1', 'Accessibility check drawer');
		const part = await fx.part('LENS', { name: 'Accessibility check lens', kind: 'plano-convex', diameterMm: 25.4, eflMm: 100 });
		await fx.receive(part.id, location.id, 2);

		// A saved setup, as an engineer saves one.
		await signIn(page, 'engineer@tarnwell.example');
		const post = (path: string, data: unknown) => page.request.post(appUrl(path), { data, headers: { origin } });
		const solved = await (await post('/api/v1/solve', { maxElements: 1, trackMm: 1250, magnification: -0.25, objectNA: 0.005, objectHeightMm: 1, limit: 1 })).json();
		const s = solved.solutions[0];
		const saved = await post('/api/v1/setups', {
			name: `${tag} relay`,
			query: solved.request,
			choice: { elements: s.elements.map((e: { partId: number; reversed: boolean }) => ({ partId: e.partId, reversed: e.reversed })), objectDistanceMm: s.objectDistanceMm, gapsMm: s.gapsMm, backDistanceMm: s.backDistanceMm }
		});
		expect(saved.status()).toBe(201);
		made.setups.push(((await saved.json()) as { id: number }).id);

		// A checked import, as the stockroom uploads one (dry run).
		await page.context().clearCookies();
		await signIn(page, 'stockroom@tarnwell.example');
		const checked = await page.request.post(appUrl('/api/v1/imports'), {
			headers: { origin },
			multipart: { file: { name: `${tag}.csv`, mimeType: 'text/csv', buffer: Buffer.from(`sku,name,kind,eflMm,diameterMm\n${tag}-1,Accessibility check lens,plano-convex,100,25.4\n`) }, dryRun: 'true' }
		});
		expect(checked.status(), await checked.text()).toBeLessThan(300);
		const [imp] = await db.select({ id: t.imports.id }).from(t.imports).orderBy(desc(t.imports.id)).limit(1);
		made.imports.push(imp.id);

		// A purchase request, as a purchaser raises one.
		await page.context().clearCookies();
		await signIn(page, 'purchaser@tarnwell.example');
		const raised = await page.request.post(appUrl('/api/v1/purchase-requests'), { headers: { origin }, data: { partId: part.id, quantity: 1 } });
		expect(raised.status(), await raised.text()).toBe(201);
		made.requests.push(((await raised.json()) as { id: number }).id);
		await page.context().clearCookies();

		// A message in the outbox (what the mail fake stores).
		const [mail] = await db.insert(t.outboxMessages).values({ fromAddress: 'glasscrib@tarnwell.example', toAddresses: 'engineer@tarnwell.example', subject: `${tag} check`, textBody: 'A message for the accessibility check.', sizeBytes: 40, receivedAt: new Date() }).$returningId();
		made.outbox.push(mail.id);

		ids = { part: part.id, setup: made.setups[0], importId: imp.id, request: made.requests[0], outbox: mail.id, location: location.id };
	}, 120_000);

	afterAll(async () => {
		await browser?.close();
		if (made.setups.length) await db.delete(t.setups).where(inArray(t.setups.id, made.setups));
		if (made.requests.length) {
			await db.delete(t.purchaseRequestEvents).where(inArray(t.purchaseRequestEvents.requestId, made.requests));
			await db.delete(t.purchaseRequests).where(inArray(t.purchaseRequests.id, made.requests));
		}
		if (made.outbox.length) await db.delete(t.outboxMessages).where(inArray(t.outboxMessages.id, made.outbox));
		await fx?.cleanup();
		await pool.end();
	});

	it('the public pages, signed out: no serious or critical violation', async () => {
		const found: string[] = [];
		for (const path of ['/signin', '/signin/forgot', '/welcome/not-a-token', '/no-such-page']) {
			await page.goto(appUrl(path));
			for (const v of await seriousViolations(page)) found.push(`${path}: ${v}`);
		}
		expect(found).toEqual([]);
	}, 120_000);

	for (const role of ROLES) {
		it(`every page as ${role}: no serious or critical violation`, async () => {
			await page.context().clearCookies();
			await signIn(page, `${role}@tarnwell.example`);
			const found: string[] = [];
			for (const path of pages(ids)) {
				await page.goto(appUrl(path));
				for (const v of await seriousViolations(page)) found.push(`${path}: ${v}`);
			}
			expect(found).toEqual([]);
		}, 300_000);
	}
});


