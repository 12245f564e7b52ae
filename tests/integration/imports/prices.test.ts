/**
 * Prices are one unit per name (issue 16): `unitPrice` is currency units in the CSV import as in the
 * API and the export (38.00 is stored as 3800 cents, never as 0.38); a column that states cents is
 * divided; a price column whose unit neither its header nor its values tell is refused with a
 * message naming the field; the wizard's preview shows each price as read, with its currency.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { like } from 'drizzle-orm';
import * as t from '../../../src/lib/server/db/schema';
import { APP, cookieFor, url } from '../accounts/helpers';
import { db, deleteParts, enc, pool } from './helpers';

const tag = `PR${Date.now().toString(36).toUpperCase()}`;
afterAll(async () => {
	await deleteParts(tag);
	await pool.end();
});

function multipart(text: string, fields: Record<string, string>) {
	const boundary = `----gc${Date.now()}`;
	const parts: Uint8Array[] = [enc(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="prices.csv"\r\nContent-Type: text/csv\r\n\r\n`), enc(text), enc('\r\n')];
	for (const [k, v] of Object.entries(fields)) parts.push(enc(`--${boundary}\r\nContent-Disposition: form-data; name="${k}"\r\n\r\n${v}\r\n`));
	parts.push(enc(`--${boundary}--\r\n`));
	return { body: Buffer.concat(parts), type: `multipart/form-data; boundary=${boundary}` };
}

async function importCsv(text: string, fields: Record<string, string> = {}) {
	const cookie = await cookieFor('stockroom@tarnwell.example');
	const { body, type } = multipart(text, fields);
	const res = await fetch(url('/api/v1/imports'), { method: 'POST', headers: { cookie, origin: APP(), 'content-type': type }, body });
	return { status: res.status, json: await res.json() };
}
const storedPrices = async (prefix: string) =>
	Object.fromEntries((await db.select({ sku: t.parts.sku, minor: t.parts.unitPriceMinor }).from(t.parts).where(like(t.parts.sku, `${prefix}%`))).map((r) => [r.sku, r.minor]));

describe('prices in CSV imports', () => {
	it('reads a unitPrice column as currency units: 38.00 and 29.50 in one file', async () => {
		const p = `${tag}-U`;
		const text = `sku,name,kind,diameterMm,eflMm,unitPrice\n${p}1,Priced A,other,25.4,100,38.00\n${p}2,Priced B,other,25.4,100,29.50\n${p}3,Priced C,other,25.4,100,45\n`;
		const res = await importCsv(text);
		expect(res.status).toBe(201);
		expect(res.json.counts).toMatchObject({ created: 3, rejected: 0 });
		expect(await storedPrices(p)).toEqual({ [`${p}1`]: 3800, [`${p}2`]: 2950, [`${p}3`]: 4500 });
		// and the API and the export give them back in the same unit
		const cookie = await cookieFor('stockroom@tarnwell.example');
		const list = await (await fetch(url(`/api/v1/parts?q=${p}&sort=sku`), { headers: { cookie } })).json();
		expect(list.items.map((x: { unitPrice: number }) => x.unitPrice)).toEqual([38, 29.5, 45]);
		const csv = await (await fetch(url(`/api/v1/parts/export.csv?q=${p}&sort=sku`), { headers: { cookie } })).text();
		expect(csv).toContain(`${p}1,Priced A`);
		expect(csv.split('\r\n').find((l) => l.includes(`${p}2,`))).toMatch(/,29\.5,EUR,/);
	});

	it('divides a column that states cents, and takes decimals as currency units', async () => {
		const p = `${tag}-C`;
		const cents = await importCsv(`sku,name,kind,diameterMm,eflMm,unitPriceMinor\n${p}1,Cents,other,25.4,100,3800\n`);
		expect(cents.status).toBe(201);
		const eur = await importCsv(`sku;name;kind;diameterMm;eflMm;Price\n${p}2;Comma;other;25,4;100;29,50\n${p}3;Whole;other;25,4;100;38\n`);
		expect(eur.status).toBe(201);
		expect(eur.json.units.unitPrice).toBe('major');
		expect(await storedPrices(p)).toEqual({ [`${p}1`]: 3800, [`${p}2`]: 2950, [`${p}3`]: 3800 });
	});

	it('refuses a price column of whole numbers whose header names no unit, and takes it once the unit is chosen', async () => {
		const p = `${tag}-A`;
		const text = `sku,name,kind,diameterMm,eflMm,Price\n${p}1,Unsure,other,25.4,100,3800\n${p}2,Unsure,other,25.4,100,45\n`;
		const refused = await importCsv(text);
		expect(refused.status).toBe(400);
		expect(refused.json.error.code).toBe('price-unit-unknown');
		expect(refused.json.error.fields['units.unitPrice']).toMatch(/"Price" holds only whole numbers \(3800, 45\).*3800\.00 or 38\.00/);
		expect(await storedPrices(p)).toEqual({});
		const chosen = await importCsv(text, { units: JSON.stringify({ unitPrice: 'minor' }), mapping: JSON.stringify({ sku: 'sku', name: 'name', kind: 'kind', diameterMm: 'diameterMm', eflMm: 'eflMm', unitPrice: 'Price' }) });
		expect(chosen.status).toBe(201);
		expect(await storedPrices(p)).toEqual({ [`${p}1`]: 3800, [`${p}2`]: 45 });
	});

	it('shows each parsed price with its currency in the wizard preview', async () => {
		const p = `${tag}-W`;
		const text = `sku,name,kind,diameterMm,eflMm,unitPrice,currency\n${p}1,Wizard A,other,25.4,100,38.00,EUR\n${p}2,Wizard B,other,25.4,100,12.5,CHF\n`;
		const res = await importCsv(text, { dryRun: 'true' });
		expect(res.status).toBe(200);
		const cookie = await cookieFor('stockroom@tarnwell.example');
		const html = await (await fetch(url(`/imports/${res.json.id}`), { headers: { cookie } })).text();
		const cells = [...html.matchAll(/data-testid="price-as-read"[^>]*>([^<]*)</g)].map((m) => m[1].replace(/\u00a0/g, ' '));
		expect(cells).toEqual(['€38.00 (EUR)', 'CHF 12.50 (CHF)']);
	});
});
