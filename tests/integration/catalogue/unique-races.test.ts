/**
 * Unique races over HTTP: ten parallel creations of one location code, or of one SKU, give one 201
 * and nine 409s that name the field (the unique index decides; its ER_DUP_ENTRY used to be a 500).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inArray, like } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { api, cookieFor } from '../accounts/helpers';

const { db, pool } = testDb();
const tag = `UQ${Date.now().toString(36).toUpperCase()}`;
let stockroom = '';

beforeAll(async () => {
	stockroom = await cookieFor('stockroom@tarnwell.example');
});
afterAll(async () => {
	await db.update(t.parts).set({ archivedAt: new Date() }).where(like(t.parts.sku, `${tag}%`));
	await db.update(t.locations).set({ archivedAt: new Date() }).where(like(t.locations.code, `${tag}%`));
	await pool.end();
});

async function race(path: string, body: unknown, n = 10) {
	const responses = await Promise.all(Array.from({ length: n }, () => api('POST', path, { cookie: stockroom }, body)));
	return Promise.all(responses.map(async (r) => ({ status: r.status, body: await r.json() })));
}

describe('parallel creations of one unique value', () => {
	it('ten creations of one location code: one 201, nine 409 naming code', async () => {
		const code = `${tag}-L1`;
		const results = await race('/api/v1/locations', { code, name: 'Race drawer' });
		const statuses = results.map((r) => r.status).sort();
		expect(statuses).toEqual([201, ...Array(9).fill(409)]);
		for (const r of results.filter((x) => x.status === 409)) {
			expect(r.body.error.code).toBe('duplicate-code');
			expect(Object.keys(r.body.error.fields)).toEqual(['code']);
		}
		expect(await db.select().from(t.locations).where(inArray(t.locations.code, [code]))).toHaveLength(1);
	});

	it('ten creations of one SKU: one 201, nine 409 naming sku', async () => {
		const sku = `${tag}-P1`;
		const results = await race('/api/v1/parts', { sku, name: 'Race window', kind: 'other', diameterMm: 25, eflMm: 100 });
		expect(results.map((r) => r.status).sort()).toEqual([201, ...Array(9).fill(409)]);
		for (const r of results.filter((x) => x.status === 409)) {
			expect(r.body.error.code).toBe('duplicate-sku');
			expect(Object.keys(r.body.error.fields)).toEqual(['sku']);
		}
	});

	it('ten creations of one supplier part number under different SKUs: one 201, nine 409 naming it', async () => {
		const responses = await Promise.all(
			Array.from({ length: 10 }, (_, i) =>
				api('POST', '/api/v1/parts', { cookie: stockroom }, { sku: `${tag}-S${i}`, name: 'Race', kind: 'other', diameterMm: 25, eflMm: 100, supplier: 'Kestrelmoor Optics', supplierPartNumber: `${tag}-PN` })
			)
		);
		const results = await Promise.all(responses.map(async (r) => ({ status: r.status, body: await r.json() })));
		expect(results.map((r) => r.status).sort()).toEqual([201, ...Array(9).fill(409)]);
		for (const r of results.filter((x) => x.status === 409)) expect(Object.keys(r.body.error.fields)).toEqual(['supplierPartNumber']);
	});
});
