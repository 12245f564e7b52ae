/**
 * Catalogue text search on the demo data (issue 16): words in any order, each matched across SKU, name,
 * kind, coating and the focal length as a number. Read-only: it changes nothing in the shared database.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { testDb } from '../../support/env';
import { listParts } from '../../../src/lib/server/catalogue/list';
import { demoParts } from '../../../seed/demo-data';
import { api, cookieFor } from '../accounts/helpers';

const { db, pool } = testDb();
const demo = demoParts();
const skusOf = async (q: string, extra: Record<string, string> = {}) =>
	(await listParts(db, { q, pageSize: '200', ...extra })).items.map((p) => p.sku).filter((s) => demo.some((d) => d.sku === s)).sort();
const demoSkus = (pred: (p: (typeof demo)[number]) => boolean) => demo.filter(pred).map((p) => p.sku).sort();

let engineer = '';
beforeAll(async () => {
	engineer = await cookieFor('engineer@tarnwell.example');
});
afterAll(() => pool.end());

describe('catalogue search on the demo data', () => {
	it('"doublet 100" finds the 100 mm doublets, in either word order, through the API too', async () => {
		const expected = demoSkus((p) => p.kind === 'achromatic-doublet' && p.eflMm === 100);
		expect(expected.length).toBeGreaterThan(0);
		expect(await skusOf('doublet 100')).toEqual(expected);
		expect(await skusOf('100 doublet')).toEqual(expected);
		expect(await skusOf('100mm Doublet')).toEqual(expected);
		const res = await api('GET', '/api/v1/parts?q=doublet%20100&pageSize=200', { cookie: engineer });
		expect(res.status).toBe(200);
		expect(((await res.json()).items as { sku: string }[]).map((p) => p.sku).filter((s) => expected.includes(s)).sort()).toEqual(expected);
	});

	it('matches the kind by its name and the focal length as a number, not as digits in text', async () => {
		// "convex 50": plano-convex and biconvex parts of 50 mm, not the 500 mm ones whose names hold "50"
		expect(await skusOf('convex 50')).toEqual(demoSkus((p) => (p.kind === 'plano-convex' || p.kind === 'biconvex') && p.eflMm === 50));
		// unsigned numbers match negative lenses too; a sign narrows to them
		expect(await skusOf('concave 50')).toEqual(demoSkus((p) => (p.kind === 'plano-concave' || p.kind === 'biconcave') && p.eflMm === -50));
		expect(await skusOf('-100')).toEqual(demoSkus((p) => p.eflMm === -100));
	});

	it('matches the coating, the SKU and the diameter', async () => {
		expect(await skusOf('fibre doublet')).toEqual(demoSkus((p) => p.kind === 'achromatic-doublet' && !!p.coating?.includes('fibre')));
		const one = demo.find((p) => p.kind === 'biconvex')!;
		expect(await skusOf(one.sku.toLowerCase())).toEqual([one.sku]);
		expect(await skusOf('12.7 doublet')).toEqual(demoSkus((p) => p.kind === 'achromatic-doublet' && p.diameterMm === 12.7));
		expect(await skusOf('doublet 100 uncoated nonsense')).toEqual([]);
	});

	it('counts exactly what it lists', async () => {
		const r = await listParts(db, { q: 'lens 25.4', pageSize: '10' });
		const all = await listParts(db, { q: 'lens 25.4', pageSize: '200' });
		expect(r.total).toBe(all.items.length);
		expect(r.items.length).toBe(Math.min(10, r.total));
	});
});
