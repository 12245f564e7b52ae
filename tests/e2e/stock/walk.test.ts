/**
 * A walk through the pages issue 16 changed, as the stockroom and a purchaser use them, at desk and
 * phone width: screenshots for a person to look at (SCREENSHOT_DIR or TEST_TMP/screenshots), and the
 * checks every page must pass: no page wider than the phone, headers in the case they are written.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { appUrl, openBrowser, screenshot, signIn } from '../../support/browser';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';

const { db, pool } = testDb();
let partId = 0;
let drawerId = 0;

beforeAll(async () => {
	// a demo part with units in quarantine (the seed puts some on the inspection shelf)
	const [qc] = await db.select().from(t.stock).where(eq(t.stock.condition, 'quarantine')).limit(1);
	partId = qc.partId;
	const [d] = await db.select().from(t.locations).where(eq(t.locations.code, 'B1-D2'));
	drawerId = d.id;
});
afterAll(() => pool.end());

describe('walk through the stockroom pages', () => {
	for (const [who, pages] of [
		['stockroom', () => ['/parts?q=doublet%20100', `/parts/${partId}`, '/', '/stock-take', `/stock-take/${drawerId}`, `/labels?location=${drawerId}&skus=TW-B1D2-05`, '/scan', `/stock?locationId=${drawerId}`]],
		['purchaser', () => ['/reorder']]
	] as const) {
		it(`as ${who}`, async () => {
			const b = await openBrowser();
			try {
				await signIn(b.page, `${who}@tarnwell.example`);
				for (const width of [1280, 390]) {
					await b.page.setViewportSize({ width, height: width === 390 ? 844 : 860 });
					for (const p of pages()) {
						const res = await b.page.goto(appUrl(p));
						expect(res?.status(), p).toBe(200);
						expect(await b.page.evaluate(() => document.documentElement.scrollWidth), `${p} at ${width}`).toBeLessThanOrEqual(width);
						const transformed = await b.page.$$eval('th', (ths) => ths.filter((th) => getComputedStyle(th).textTransform === 'uppercase' || getComputedStyle(th.querySelector('button') ?? th).textTransform === 'uppercase').length);
						expect(transformed, p).toBe(0);
						await screenshot(b.page, `walk-${who}-${p.replace(/[^a-z0-9]+/gi, '_').replace(/^_|_$/g, '') || 'overview'}-${width}`);
					}
				}
			} finally {
				await b.close();
			}
		});
	}
});
