/**
 * The catalogue, stock and reservation API over HTTP against the built app (APP_URL), signed in as the
 * demo users with session cookies (writes carry our Origin, as the CSRF net asks). Everything created
 * here is archived at the end, so the demo catalogue count other tests read stays as seeded.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inArray } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { api, cookieFor, url } from '../accounts/helpers';

const { db, pool } = testDb();
const tag = `HT${Date.now().toString(36).toUpperCase()}`;
const created: number[] = [];
let stockroom = '';
let engineer = '';
let engineer2 = '';
let locA = 0;
let locB = 0;

const planoConvex = (sku: string, over: Record<string, unknown> = {}) => ({
	sku,
	name: `HTTP test plano-convex ${sku}`,
	kind: 'plano-convex',
	diameterMm: 25.4,
	surfaces: [{ radiusMm: 51.7, thicknessMm: 4, material: '517642' }, { radiusMm: null }],
	coating: `${tag}-coat`,
	supplier: 'Kestrelmoor Optics',
	supplierPartNumber: `${sku}-PN`,
	unitPrice: 24.5,
	currency: 'EUR',
	...over
});

async function createPart(body: unknown) {
	const res = await api('POST', '/api/v1/parts', { cookie: stockroom }, body);
	const json = await res.json();
	if (res.status === 201) created.push(json.id);
	return { res, json };
}

beforeAll(async () => {
	[stockroom, engineer, engineer2] = await Promise.all([
		cookieFor('stockroom@tarnwell.example'),
		cookieFor('engineer@tarnwell.example'),
		cookieFor('engineer2@tarnwell.example')
	]);
	const locs = await (await api('GET', '/api/v1/locations', { cookie: stockroom })).json();
	expect(locs.items.length).toBeGreaterThanOrEqual(2);
	[locA, locB] = [locs.items[0].id, locs.items[1].id];
});

afterAll(async () => {
	// Archive what we made (DELETE is tested below; this also catches parts a failed test left behind).
	if (created.length) await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, created));
	await pool.end();
});

describe('parts API', () => {
	let partId = 0;

	it('creates a part: 201, a Location header and the Part JSON of DESIGN.md', async () => {
		const { res, json } = await createPart(planoConvex(`${tag}-A`));
		expect(res.status).toBe(201);
		expect(res.headers.get('location')).toBe(`/api/v1/parts/${json.id}`);
		partId = json.id;
		for (const key of [
			'id', 'sku', 'name', 'kind', 'diameterMm', 'clearApertureMm', 'surfaces', 'eflMm', 'bflMm', 'designWavelengthNm', 'coating',
			'supplier', 'supplierPartNumber', 'unitPrice', 'currency', 'leadTimeDays', 'reorderPoint', 'reorderQuantity', 'onHand', 'available', 'measured'
		]) {
			expect(json, key).toHaveProperty(key);
		}
		expect(json).toMatchObject({
			sku: `${tag}-A`,
			kind: 'plano-convex',
			diameterMm: 25.4,
			clearApertureMm: null,
			designWavelengthNm: 587.6,
			supplier: 'Kestrelmoor Optics',
			unitPrice: 24.5,
			currency: 'EUR',
			onHand: 0,
			available: 0,
			measured: null
		});
		// The medium after a surface rides on it; the last surface has neither thickness nor material.
		expect(json.surfaces).toEqual([{ radiusMm: 51.7, thicknessMm: 4, material: '517642' }, { radiusMm: null }]);
		// Plano-convex, curved side first: EFL = R/(n − 1) exactly (Hecht, Optics, 5th ed. 2017, §6.2, thick-lens
		// formula with R2 = ∞, from memory); n of the 517642 glass code at d is 1.517, so about 100 mm.
		expect(json.computed.source).toBe('prescription');
		expect(json.computed.eflMm).toBeGreaterThan(99);
		expect(json.computed.eflMm).toBeLessThan(101);
	});

	it('refuses a radius that cannot span the diameter, with a field message, and stores nothing', async () => {
		const sku = `${tag}-BADR`;
		const { res, json } = await createPart(planoConvex(sku, { surfaces: [{ radiusMm: 10, thicknessMm: 4, material: '517642' }, { radiusMm: null }] }));
		expect(res.status).toBe(400);
		expect(json.error.code).toBe('invalid-input');
		expect(json.error.fields['surfaces.0.radiusMm']).toMatch(/cannot span/);
		const list = await (await api('GET', `/api/v1/parts?q=${sku}`, { cookie: stockroom })).json();
		expect(list.total).toBe(0);
	});

	it('refuses a zero radius and extra keys with field messages', async () => {
		const zero = await createPart(planoConvex(`${tag}-ZERO`, { surfaces: [{ radiusMm: 0, thicknessMm: 4, material: '517642' }, { radiusMm: null }] }));
		expect(zero.res.status).toBe(400);
		expect(zero.json.error.fields['surfaces.0.radiusMm']).toMatch(/cannot be 0/);
		const extra = await createPart({ ...planoConvex(`${tag}-EXTRA`), colour: 'blue' });
		expect(extra.res.status).toBe(400);
		expect(extra.json.error.code).toBe('invalid-input');
		expect(JSON.stringify(extra.json.error.fields)).toMatch(/colour/);
	});

	it('answers 415 to a body that is not JSON', async () => {
		const res = await fetch(url('/api/v1/parts'), {
			method: 'POST',
			headers: { cookie: stockroom, origin: new URL(url('/')).origin, 'content-type': 'text/plain' },
			body: JSON.stringify(planoConvex(`${tag}-TEXT`))
		});
		expect(res.status).toBe(415);
		expect((await res.json()).error.code).toBe('unsupported-media-type');
	});

	it('answers 409 with a field message to a duplicate SKU', async () => {
		const { res, json } = await createPart(planoConvex(`${tag}-A`, { supplierPartNumber: `${tag}-OTHER` }));
		expect(res.status).toBe(409);
		expect(json.error).toMatchObject({ code: 'duplicate-sku', fields: { sku: expect.any(String) } });
	});

	it('lists with filters, sort and paging, and refuses a bad sort', async () => {
		// Three more parts of this run: EFL about 50, 100 (A) and 200 mm.
		const b = await createPart(planoConvex(`${tag}-B`, { surfaces: [{ radiusMm: 103.4, thicknessMm: 4, material: '517642' }, { radiusMm: null }] }));
		const c = await createPart(planoConvex(`${tag}-C`, { surfaces: [{ radiusMm: 25.85, thicknessMm: 6, material: '517642' }, { radiusMm: null }] }));
		const d = await createPart({ ...planoConvex(`${tag}-D`), kind: 'other', surfaces: [], eflMm: 150, coating: `${tag}-coat` });
		expect([b.res.status, c.res.status, d.res.status]).toEqual([201, 201, 201]);

		const get = async (qs: string) => {
			const res = await api('GET', `/api/v1/parts?${qs}`, { cookie: engineer });
			return { status: res.status, body: await res.json() };
		};
		const byEfl = await get(`coating=${tag}-coat&sort=eflMm&order=asc`);
		expect(byEfl.status).toBe(200);
		expect(byEfl.body).toMatchObject({ total: 4, page: 1, pageSize: 50 });
		expect(byEfl.body.items.map((p: { sku: string }) => p.sku)).toEqual([`${tag}-C`, `${tag}-A`, `${tag}-D`, `${tag}-B`]);
		const desc = await get(`coating=${tag}-coat&sort=eflMm&order=desc`);
		expect(desc.body.items.map((p: { sku: string }) => p.sku)).toEqual([`${tag}-B`, `${tag}-D`, `${tag}-A`, `${tag}-C`]);

		const range = await get(`coating=${tag}-coat&eflMin=90&eflMax=160&sort=sku`);
		expect(range.body.items.map((p: { sku: string }) => p.sku)).toEqual([`${tag}-A`, `${tag}-D`]);
		const kind = await get(`coating=${tag}-coat&kind=other`);
		expect(kind.body.items.map((p: { sku: string }) => p.sku)).toEqual([`${tag}-D`]);
		const text = await get(`q=${tag}-`);
		expect(text.body.total).toBe(4);

		const page2 = await get(`coating=${tag}-coat&sort=sku&pageSize=3&page=2`);
		expect(page2.body).toMatchObject({ total: 4, page: 2, pageSize: 3 });
		expect(page2.body.items.map((p: { sku: string }) => p.sku)).toEqual([`${tag}-D`]);

		const bad = await get('sort=colour');
		expect(bad.status).toBe(400);
		expect(bad.body.error.fields.sort).toMatch(/sort must be one of/);
		const unknown = await get('colour=blue');
		expect(unknown.status).toBe(400);
	});

	it('PATCH changes fields and recomputes the EFL; a purchaser may change only purchasing fields', async () => {
		const res = await api('PATCH', `/api/v1/parts/${partId}`, { cookie: stockroom }, {
			name: `HTTP test renamed ${tag}`,
			surfaces: [{ radiusMm: 103.4, thicknessMm: 4, material: '517642' }, { radiusMm: null }]
		});
		expect(res.status).toBe(200);
		const json = await res.json();
		expect(json.name).toBe(`HTTP test renamed ${tag}`);
		expect(json.computed.eflMm).toBeGreaterThan(198);
		expect(json.computed.eflMm).toBeLessThan(202);
		const bad = await api('PATCH', `/api/v1/parts/${partId}`, { cookie: stockroom }, { diameterMm: -1 });
		expect(bad.status).toBe(400);
		expect((await bad.json()).error.fields.diameterMm).toBeTruthy();

		const purchaser = await cookieFor('purchaser@tarnwell.example');
		const price = await api('PATCH', `/api/v1/parts/${partId}`, { cookie: purchaser }, { unitPrice: 26 });
		expect(price.status).toBe(200);
		expect((await price.json()).unitPrice).toBe(26);
		const optics = await api('PATCH', `/api/v1/parts/${partId}`, { cookie: purchaser }, { diameterMm: 30 });
		expect(optics.status).toBe(403);
		const engineerPatch = await api('PATCH', `/api/v1/parts/${partId}`, { cookie: engineer }, { unitPrice: 1 });
		expect(engineerPatch.status).toBe(403);
	});

	it('DELETE removes a part without history and archives one with a ledger', async () => {
		const fresh = await createPart(planoConvex(`${tag}-DEL`));
		const del = await api('DELETE', `/api/v1/parts/${fresh.json.id}`, { cookie: stockroom });
		expect(del.status).toBe(200);
		expect(await del.json()).toEqual({ id: fresh.json.id, outcome: 'deleted' });
		expect((await api('GET', `/api/v1/parts/${fresh.json.id}`, { cookie: engineer })).status).toBe(404);

		const kept = await createPart(planoConvex(`${tag}-ARC`));
		const rec = await api('POST', '/api/v1/stock/receive', { cookie: stockroom }, { partId: kept.json.id, quantity: 1, locationId: locA });
		expect(rec.status).toBe(201);
		const arc = await api('DELETE', `/api/v1/parts/${kept.json.id}`, { cookie: stockroom });
		expect(await arc.json()).toEqual({ id: kept.json.id, outcome: 'archived' });
		const after = await (await api('GET', `/api/v1/parts/${kept.json.id}`, { cookie: engineer })).json();
		expect(after.archived).toBe(true);
		const listed = await (await api('GET', `/api/v1/parts?q=${tag}-ARC`, { cookie: engineer })).json();
		expect(listed.total).toBe(0);
		const withArchived = await (await api('GET', `/api/v1/parts?q=${tag}-ARC&archived=include`, { cookie: engineer })).json();
		expect(withArchived.total).toBe(1);
		expect((await api('DELETE', `/api/v1/parts/${kept.json.id}`, { cookie: engineer })).status).toBe(403);
	});
});

describe('stock and reservations API', () => {
	let partId = 0;

	beforeAll(async () => {
		const { res, json } = await createPart(planoConvex(`${tag}-STK`));
		expect(res.status).toBe(201);
		partId = json.id;
	});

	const totals = async () => {
		const p = await (await api('GET', `/api/v1/parts/${partId}`, { cookie: engineer })).json();
		return { onHand: p.onHand, available: p.available };
	};

	it('receives, moves and issues; the ledger shows each movement, newest first', async () => {
		const rec = await api('POST', '/api/v1/stock/receive', { cookie: stockroom }, { partId, quantity: 5, locationId: locA, note: 'delivery' });
		expect(rec.status).toBe(201);
		expect(await rec.json()).toMatchObject({ kind: 'receive', partId, quantity: 5, from: null, to: { locationId: locA, condition: 'usable' } });
		const mv = await api('POST', '/api/v1/stock/move', { cookie: stockroom }, { partId, quantity: 2, fromLocationId: locA, toLocationId: locB });
		expect(mv.status).toBe(201);
		expect(await mv.json()).toMatchObject({ kind: 'move', quantity: 2, from: { locationId: locA }, to: { locationId: locB } });
		const iss = await api('POST', '/api/v1/stock/issue', { cookie: stockroom }, { partId, quantity: 1, locationId: locB, issuedTo: 'bench 3' });
		expect(iss.status).toBe(201);
		expect(await totals()).toEqual({ onHand: 4, available: 4 });

		const ledger = await (await api('GET', `/api/v1/parts/${partId}/movements`, { cookie: engineer })).json();
		expect(ledger.items.map((m: { kind: string; quantity: number }) => [m.kind, m.quantity])).toEqual([
			['issue', 1],
			['move', 2],
			['receive', 5]
		]);
		expect(ledger.items[0].from).toMatchObject({ locationId: locB, condition: 'usable' });
		expect((await api('GET', '/api/v1/parts/99999999/movements', { cookie: engineer })).status).toBe(404);
	});

	it('refuses to take out more than a location holds: 409 insufficient-stock in the JSON error shape, nothing changes', async () => {
		const res = await api('POST', '/api/v1/stock/issue', { cookie: stockroom }, { partId, quantity: 10, locationId: locA });
		expect(res.status).toBe(409);
		const body = await res.json();
		expect(body).toEqual({ error: { code: 'insufficient-stock', message: expect.stringMatching(/^Not enough .*stock/), fields: { quantity: expect.any(String) } } });
		const mv = await api('POST', '/api/v1/stock/move', { cookie: stockroom }, { partId, quantity: 4, fromLocationId: locA, toLocationId: locB });
		expect(mv.status).toBe(409);
		expect(await totals()).toEqual({ onHand: 4, available: 4 });
		const bad = await api('POST', '/api/v1/stock/receive', { cookie: stockroom }, { partId, quantity: 0, locationId: locA });
		expect(bad.status).toBe(400);
		expect((await bad.json()).error.fields.quantity).toMatch(/At least 1/);
		expect((await api('POST', '/api/v1/stock/receive', { cookie: engineer }, { partId, quantity: 1, locationId: locA })).status).toBe(403);
	});

	it('a reservation lowers available; another engineer cannot release it (404), its owner can', async () => {
		const until = new Date(Date.now() + 7 * 86400e3).toISOString();
		const res = await api('POST', '/api/v1/reservations', { cookie: engineer }, { partId, quantity: 3, until, note: 'HTTP test' });
		expect(res.status).toBe(201);
		const reservation = await res.json();
		expect(reservation).toMatchObject({ partId, quantity: 3 });
		expect(await totals()).toEqual({ onHand: 4, available: 1 });

		const tooMany = await api('POST', '/api/v1/reservations', { cookie: engineer2 }, { partId, quantity: 2, until });
		expect(tooMany.status).toBe(409);
		expect((await tooMany.json()).error.code).toBe('insufficient-stock');

		const other = await api('DELETE', `/api/v1/reservations/${reservation.id}`, { cookie: engineer2 });
		expect(other.status).toBe(404);
		expect(await totals()).toEqual({ onHand: 4, available: 1 });

		const own = await api('DELETE', `/api/v1/reservations/${reservation.id}`, { cookie: engineer });
		expect(own.status).toBe(200);
		expect(await own.json()).toEqual({ id: reservation.id, status: 'released' });
		expect(await totals()).toEqual({ onHand: 4, available: 4 });
	});

	it('"available only" in the list follows stock and reservations', async () => {
		const listed = async () => (await (await api('GET', `/api/v1/parts?q=${tag}-STK&available=true`, { cookie: engineer })).json()).total;
		expect(await listed()).toBe(1);
		const until = new Date(Date.now() + 86400e3).toISOString();
		const r = await (await api('POST', '/api/v1/reservations', { cookie: engineer }, { partId, quantity: 4, until })).json();
		expect(await listed()).toBe(0);
		expect((await api('DELETE', `/api/v1/reservations/${r.id}`, { cookie: engineer })).status).toBe(200);
		expect(await listed()).toBe(1);
	});
});
