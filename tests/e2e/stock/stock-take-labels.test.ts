/**
 * The stockroom's first day in Chromium (issue 16): count one drawer on a phone-sized screen and
 * confirm (the adjustments are written); print a sheet of QR labels whose codes open the drawer's and
 * the part's pages; scan a part's label with a fake camera (Chromium's file-backed capture device fed a
 * Y4M frame of the printed label) and open the part with its issue form ready.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { Jimp } from 'jimp';
import jsQR from 'jsqr';
import { appUrl, expect, openBrowser, screenshot, signIn } from '../../support/browser';
import { testDb } from '../../support/env';
import { Fixtures, type LocationFixture } from '../../support/fixtures';
import * as t from '../../../src/lib/server/db/schema';

const { db, pool } = testDb();
let fx: Fixtures;
let tag = '';
let partId = 0;
let drawer: LocationFixture = { id: 0, code: '' };
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'glasscrib-scan-'));

beforeAll(async () => {
	// A drawer of this file's own holding two parts of its own: one is counted, the other left uncounted.
	fx = await Fixtures.open('E2E-ST');
	drawer = await fx.location('D1', 'Stock take test drawer');
	let other = 0;
	({ id: partId, sku: tag } = await fx.part('COND', { name: 'Browser stock take condenser', kind: 'other', diameterMm: 25, eflMm: 40 }));
	({ id: other } = await fx.part('FIELD', { name: 'Browser stock take field lens', kind: 'other', diameterMm: 25, eflMm: 60 }));
	await fx.receive(partId, drawer.id, 4);
	await fx.receive(other, drawer.id, 2);
});
afterAll(async () => {
	await fx?.cleanup();
	fs.rmSync(tmp, { recursive: true, force: true });
	await pool.end();
});

/** A decoded QR code of a PNG (data: URL or bytes), read with jsQR in Node. */
async function decode(png: Buffer): Promise<string | null> {
	const img = await Jimp.read(png);
	return jsQR(new Uint8ClampedArray(img.bitmap.data), img.bitmap.width, img.bitmap.height)?.data ?? null;
}

/** One 4:2:0 Y4M frame of an RGBA image centred on white (Chromium's fake capture reads it as a looping video). */
function y4m(rgba: Buffer, w: number, h: number, size: number): Buffer {
	const Y = Buffer.alloc(size * size, 235);
	const U = Buffer.alloc((size / 2) * (size / 2), 128);
	const V = Buffer.alloc((size / 2) * (size / 2), 128);
	const ox = (size - w) >> 1;
	const oy = (size - h) >> 1;
	for (let y = 0; y < h; y++)
		for (let x = 0; x < w; x++) {
			const i = (y * w + x) * 4;
			const luma = 0.299 * rgba[i] + 0.587 * rgba[i + 1] + 0.114 * rgba[i + 2]; // ITU-R BT.601 weights (common practice, no source)
			Y[(y + oy) * size + x + ox] = Math.round(16 + (luma * 219) / 255);
		}
	return Buffer.concat([Buffer.from(`YUV4MPEG2 W${size} H${size} F5:1 Ip A1:1 C420jpeg\nFRAME\n`), Y, U, V]);
}

describe('stock take, labels and scan in Chromium', () => {
	let labelPng: Buffer | null = null;

	it('counts one drawer on a phone and writes the adjustment after confirming', async () => {
		const b = await openBrowser();
		try {
			const { page } = b;
			await page.setViewportSize({ width: 390, height: 844 });
			await signIn(page, 'stockroom@tarnwell.example');
			await page.goto(appUrl(`/stock?locationId=${drawer.id}`));
			await page.getByRole('link', { name: 'Count this drawer' }).click();
			await expect(page).toHaveURL(new RegExp(`/stock-take/${drawer.id}$`));
			await expect(page.getByTestId('drawer-count')).toBeVisible();
			await expect.poll(() => page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
			// both parts of the drawer are listed to count; only the condenser is counted
			await expect(page.getByRole('textbox', { name: `${fx.tag}-FIELD` })).toBeVisible();
			await page.getByRole('textbox', { name: tag }).fill('3');
			await page.getByRole('button', { name: 'Check the count' }).click();
			const result = page.getByTestId('stock-take-result');
			await expect(result).toBeVisible();
			const line = result.getByRole('row').filter({ hasText: tag });
			await expect(line.getByTestId('take-difference')).toHaveText('-1');
			await expect(page.getByTestId('take-line')).toHaveCount(1); // only the line counted
			await screenshot(page, 'stock-take-drawer-390');
			const before = await db.select().from(t.movements).where(and(eq(t.movements.partId, partId), eq(t.movements.reason, 'stock take')));
			expect(before).toHaveLength(0);
			await page.getByRole('button', { name: 'Confirm: write 1 adjustment' }).click();
			await expect(page.getByRole('heading', { name: 'Written to the ledger' })).toBeVisible();
			await expect(page.getByTestId('stock-take-summary')).toHaveText(/1 adjustment written with the reason “stock take”/);
			await screenshot(page, 'stock-take-done-390');
			const written = await db.select().from(t.movements).where(and(eq(t.movements.partId, partId), eq(t.movements.reason, 'stock take')));
			expect(written.map((m) => [m.kind, m.quantity, m.fromLocationId])).toEqual([['adjust', 1, drawer.id]]);
			const [s] = await db.select().from(t.stock).where(and(eq(t.stock.partId, partId), eq(t.stock.locationId, drawer.id), eq(t.stock.condition, 'usable')));
			expect(s.quantity).toBe(3);
		} finally {
			await b.close();
		}
	});

	it('prints a sheet of labels whose codes open the drawer and the part', async () => {
		const b = await openBrowser();
		try {
			const { page } = b;
			await signIn(page, 'stockroom@tarnwell.example');
			await page.goto(appUrl('/labels'));
			await page.getByRole('group', { name: 'Drawers' }).getByRole('checkbox', { name: new RegExp(`^${drawer.code} `) }).check();
			await page.getByLabel('Parts (SKUs, separated by spaces, commas or lines)').fill(`${tag} NO-SUCH-PART`);
			await page.getByRole('button', { name: 'Make labels' }).click();
			await expect(page).toHaveURL(/\/labels\?.*skus=/);
			const sheet = page.getByRole('region', { name: 'Label sheet' });
			await expect(sheet).toBeVisible();
			await expect(page.getByRole('alert')).toContainText('NO-SUCH-PART');
			await expect(sheet.getByTestId('label')).toHaveCount(2);
			const labels = await sheet.getByTestId('label').evaluateAll((els) => els.map((e) => ({ kind: e.getAttribute('data-kind'), url: e.getAttribute('data-url'), src: e.querySelector('img')!.getAttribute('src')! })));
			expect(labels.map((l) => [l.kind, new URL(l.url!).pathname + new URL(l.url!).search])).toEqual([
				['drawer', `/stock?locationId=${drawer.id}`],
				['part', `/parts/${partId}`]
			]);
			for (const l of labels) {
				const png = Buffer.from(l.src.replace(/^data:image\/png;base64,/, ''), 'base64');
				expect(await decode(png)).toBe(l.url);
				if (l.kind === 'part') labelPng = png;
			}
			// each code really opens its page
			for (const l of labels) {
				await page.goto(l.url!);
				if (l.kind === 'part') await expect(page.getByRole('heading', { level: 1 })).toContainText(tag);
				else await expect(page.getByRole('heading', { level: 2, name: drawer.code })).toBeVisible();
			}
			// the printed sheet: no header, three labels a row
			await page.goto(appUrl(`/labels?location=${drawer.id}&skus=${tag}`));
			await page.emulateMedia({ media: 'print' });
			await expect(page.getByRole('banner')).toBeHidden();
			await expect.poll(() => sheet.evaluate((e) => getComputedStyle(e).gridTemplateColumns.split(' ').length)).toBe(3);
			await screenshot(page, 'labels-print');
		} finally {
			await b.close();
		}
	});

	it('scans a part label from a fake camera and opens the part with issue ready', async () => {
		expect(labelPng).not.toBeNull();
		const img = await Jimp.read(labelPng!);
		img.resize({ w: 360, h: 360 });
		const file = path.join(tmp, 'label.y4m');
		fs.writeFileSync(file, y4m(Buffer.from(img.bitmap.data), 360, 360, 480));
		const b = await openBrowser({ args: ['--use-fake-device-for-media-stream', '--use-fake-ui-for-media-stream', `--use-file-for-fake-video-capture=${file}`] });
		try {
			const { page } = b;
			await page.setViewportSize({ width: 390, height: 844 });
			await signIn(page, 'stockroom@tarnwell.example');
			const res = await page.goto(appUrl('/scan'));
			expect(res?.status(), (await page.locator('body').innerText()).slice(0, 400)).toBe(200);
			expect(res?.headers()['permissions-policy']).toContain('camera=(self)');
			await page.getByRole('button', { name: 'Start the camera' }).click();
			const found = page.getByTestId('scan-result');
			await expect(found).toContainText(tag, { timeout: 20_000 });
			await expect(found).toHaveAttribute('data-kind', 'part');
			await screenshot(page, 'scan-found-390');
			await found.getByRole('link', { name: 'Issue', exact: true }).click();
			await expect(page).toHaveURL(new RegExp(`/parts/${partId}\\?op=issue`));
			await expect(page.getByRole('tab', { selected: true })).toHaveText('issue');
		} finally {
			await b.close();
		}
	});

	it('refuses a code that is not one of our labels', async () => {
		const { labelTarget } = await import('../../../src/lib/scan');
		const origin = appUrl('/');
		expect(labelTarget(new URL(`/parts/${partId}`, origin).toString(), origin)).toMatchObject({ kind: 'part', id: partId });
		expect(labelTarget(new URL(`/stock?locationId=${drawer.id}`, origin).toString(), origin)).toMatchObject({ kind: 'drawer', id: drawer.id });
		expect(labelTarget(`https://elsewhere.example/parts/${partId}`, origin)).toBeNull();
		expect(labelTarget(new URL('/admin/users', origin).toString(), origin)).toBeNull();
		expect(labelTarget('TW-A1D2-04', origin)).toBeNull();
	});
});
