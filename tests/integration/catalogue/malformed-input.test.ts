/**
 * Malformed input never gives a 5xx (issue 13, item 4): text with NUL or lone surrogates, impossible
 * dates, ids that are not canonical positive integers, non-finite paging, truncated form bodies.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { count, eq, like } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { APP, api, cookieFor, url } from '../accounts/helpers';

const { db, pool } = testDb();
const tag = `MF${Date.now().toString(36).toUpperCase()}`;
let stockroom = '';
let partId = 0;

beforeAll(async () => {
	stockroom = await cookieFor('stockroom@tarnwell.example');
	const res = await api('POST', '/api/v1/parts', { cookie: stockroom }, { sku: `${tag}-1`, name: 'Malformed input test', kind: 'other', diameterMm: 25, eflMm: 100 });
	expect(res.status).toBe(201);
	partId = (await res.json()).id;
});
afterAll(async () => {
	await db.update(t.parts).set({ archivedAt: new Date() }).where(like(t.parts.sku, `${tag}%`));
	await db.update(t.locations).set({ archivedAt: new Date() }).where(like(t.locations.code, `${tag}%`));
	await pool.end();
});

describe('text fields', () => {
	it.each([
		['a lone surrogate', '\ud800'],
		['a NUL', 'Drawer\u0000one']
	])('a location name with %s is refused with 400 naming the field', async (_, name) => {
		const res = await api('POST', '/api/v1/locations', { cookie: stockroom }, { code: `${tag}-T`, name });
		expect(res.status).toBe(400);
		expect(Object.keys((await res.json()).error.fields)).toEqual(['name']);
	});

	it('a lone surrogate deep in a part body names its path; a body nested 10,000 deep is 400', async () => {
		const res = await api('PATCH', `/api/v1/parts/${partId}`, { cookie: stockroom }, { notes: 'ok', surfaces: [{ material: 'x\udfffy' }] });
		expect(res.status).toBe(400);
		expect((await res.json()).error.fields).toHaveProperty(['surfaces.0.material']);
		const deep = '['.repeat(10_000) + ']'.repeat(10_000);
		const res2 = await fetch(url('/api/v1/parts'), { method: 'POST', headers: { cookie: stockroom, origin: APP(), 'content-type': 'application/json' }, body: deep });
		expect(res2.status).toBe(400);
	});

	it('a NUL in a form field is 400, not 500', async () => {
		const res = await fetch(url('/locations?/create'), {
			method: 'POST',
			headers: { cookie: stockroom, origin: APP(), 'content-type': 'application/x-www-form-urlencoded', accept: 'application/json', 'x-sveltekit-action': 'true' },
			body: new URLSearchParams({ code: `${tag}-F`, name: 'A\u0000B' }).toString()
		});
		expect(res.status).toBe(400);
	});
});

describe('dates', () => {
	it.each([
		['30 February', '2026-02-30'],
		['year -1', '-000001-06-01T00:00:00Z'],
		['null', null],
		['a number', 0]
	])('a measurement dated %s is refused with 400 naming measuredAt', async (_, measuredAt) => {
		const before = await db.select({ n: count() }).from(t.measurements);
		const res = await api('POST', `/api/v1/parts/${partId}/measurements`, { cookie: stockroom }, { eflMm: 100.2, wavelengthNm: 587.6, measuredAt });
		expect(res.status).toBe(400);
		expect(Object.keys((await res.json()).error.fields)).toEqual(['measuredAt']);
		expect(await db.select({ n: count() }).from(t.measurements)).toEqual(before);
	});

	it('a real date is stored as given', async () => {
		const res = await api('POST', `/api/v1/parts/${partId}/measurements`, { cookie: stockroom }, { eflMm: 100.2, wavelengthNm: 587.6, measuredAt: '2024-02-29' });
		expect(res.status).toBe(201);
		expect((await res.json()).measuredAt).toBe('2024-02-29T00:00:00.000Z');
	});

	it('a reservation until 30 February is refused', async () => {
		const res = await api('POST', '/api/v1/reservations', { cookie: stockroom }, { partId, quantity: 1, until: `${new Date().getUTCFullYear() + 1}-02-30` });
		expect(res.status).toBe(400);
	});
});

describe('ids in the path', () => {
	it.each(['%201', '0x10', '1e3', '01', '1.0', '-1', '0', '99999999999999999999', '1%00'])('/api/v1/parts/%s is 404 (and so is the part page)', async (raw) => {
		expect((await api('GET', `/api/v1/parts/${raw}`, { cookie: stockroom })).status).toBe(404);
		expect((await fetch(url(`/parts/${raw}`), { headers: { cookie: stockroom }, redirect: 'manual' })).status).toBe(404);
	});

	it('non-canonical spellings of a real datasheet id are 404, and DELETE /api/v1/datasheets/%20<id> deletes nothing', async () => {
		const bytes = new TextEncoder().encode('%PDF-1.7\n% malformed-input test\n%%EOF\n');
		const body = new FormData();
		body.append('file', new Blob([bytes]), 'sheet.pdf');
		const up = await fetch(url(`/api/v1/parts/${partId}/datasheets`), { method: 'POST', body, headers: { cookie: stockroom, origin: APP() } });
		expect(up.status).toBe(201);
		const { id } = await up.json();
		for (const raw of [`%20${id}`, `${id}%20`, `0x${id.toString(16)}`, `${id}.0`, `+${id}`, `0${id}`, `${id}e0`]) {
			expect((await api('GET', `/api/v1/datasheets/${raw}`, { cookie: stockroom })).status, raw).toBe(404);
			expect((await api('DELETE', `/api/v1/datasheets/${raw}`, { cookie: stockroom })).status, raw).toBe(404);
		}
		expect(await db.select({ id: t.datasheets.id }).from(t.datasheets).where(eq(t.datasheets.id, id))).toHaveLength(1);
		expect((await api('GET', `/api/v1/datasheets/${id}`, { cookie: stockroom })).status).toBe(200);
		expect((await api('DELETE', `/api/v1/datasheets/${id}`, { cookie: stockroom })).status).toBe(204);
	});

	it('the canonical id still works', async () => {
		expect((await api('GET', `/api/v1/parts/${partId}`, { cookie: stockroom })).status).toBe(200);
	});
});

describe('paging', () => {
	it.each(['Infinity', '-Infinity', 'NaN', '1e400', '0', '-1', '1.5', '9007199254740993'])('page=%s is 400 on the API and not a 5xx on the page', async (page) => {
		expect((await api('GET', `/api/v1/parts?page=${page}`, { cookie: stockroom })).status).toBe(400);
		const res = await fetch(url(`/parts?page=${page}`), { headers: { cookie: stockroom }, redirect: 'manual' });
		expect(res.status).toBeLessThan(500);
	});
});

describe('truncated multipart bodies', () => {
	const truncated = '--BOUNDARY\r\nContent-Disposition: form-data; name="email"\r\n\r\nsomeone@tarnwell.exa';
	const headers = (extra: Record<string, string> = {}) => ({ origin: APP(), 'content-type': 'multipart/form-data; boundary=BOUNDARY', ...extra });

	it('to the public /signin/forgot: 400, for a plain and an enhanced post', async () => {
		expect((await fetch(url('/signin/forgot'), { method: 'POST', headers: headers(), body: truncated, redirect: 'manual' })).status).toBe(400);
		const enhanced = await fetch(url('/signin/forgot'), {
			method: 'POST',
			headers: headers({ accept: 'application/json', 'x-sveltekit-action': 'true' }),
			body: truncated
		});
		expect(enhanced.status).toBe(400);
	});

	it('to a signed-in action (/locations?/create): 400', async () => {
		const res = await fetch(url('/locations?/create'), { method: 'POST', headers: headers({ cookie: stockroom }), body: truncated, redirect: 'manual' });
		expect(res.status).toBe(400);
	});
});
