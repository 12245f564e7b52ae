/**
 * A walk through the pages issue 16 changed, as the stockroom and a purchaser use them, at desk and
 * phone width: screenshots for a person to look at (SCREENSHOT_DIR or TEST_TMP/screenshots), and the
 * checks every page must pass: no page wider than the phone, headers in the case they are written.
 */
import { afterAll, beforeAll, describe, it } from 'vitest';
import { appUrl, expect, openBrowser, screenshot, signIn } from '../../support/browser';
import { Fixtures } from '../../support/fixtures';

let fx: Fixtures;
let partId = 0;
let sku = '';
let drawerId = 0;

beforeAll(async () => {
	// a part of this file's own in a drawer of its own, with units usable and in quarantine
	fx = await Fixtures.open('E2E-WALK');
	({ id: drawerId } = await fx.location('D1', 'Walk test drawer, achromatic doublets 25.4 mm'));
	({ id: partId, sku } = await fx.part('ACH100', { name: `${fx.tag} achromatic doublet f 100`, kind: 'other', diameterMm: 25.4, eflMm: 100 }));
	await fx.receive(partId, drawerId, 3);
	await fx.receive(partId, drawerId, 1, 'scratch seen at goods-in', 'quarantine');
});
afterAll(() => fx?.cleanup());

describe('walk through the stockroom pages', () => {
	for (const [who, pages] of [
		['stockroom', () => [`/parts?q=${encodeURIComponent(`${fx.tag} doublet 100`)}`, `/parts/${partId}`, '/', '/stock-take', `/stock-take/${drawerId}`, `/labels?location=${drawerId}&skus=${sku}`, '/scan', `/stock?locationId=${drawerId}`]],
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
						await expect(b.page.getByRole('main')).toBeVisible();
						await expect.poll(() => b.page.evaluate(() => document.documentElement.scrollWidth), { message: `${p} at ${width}` }).toBeLessThanOrEqual(width);
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
