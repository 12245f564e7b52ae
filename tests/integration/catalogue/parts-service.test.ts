import { afterAll, describe, expect, it } from 'vitest';
import { eq, inArray } from 'drizzle-orm';
import { ZodError } from 'zod';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as parts from '../../../src/lib/server/catalogue/parts';
import { recordMeasurement } from '../../../src/lib/server/catalogue/measurements';
import { refractiveIndex } from '../../../src/lib/optics';
import { DomainError } from '../../../src/lib/server/errors';

const { db, pool } = testDb();
const created: number[] = [];
const tag = `IT${Date.now().toString(36).toUpperCase()}`;
let actorId = 0;

afterAll(async () => {
	// Archive what we made, so the demo's catalogue count stays as seeded for other tests.
	if (created.length) await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, created));
	await pool.end();
});

async function actor() {
	if (!actorId) [{ id: actorId }] = await db.select({ id: t.users.id }).from(t.users).where(eq(t.users.role, 'stockroom')).limit(1);
	return { id: actorId, role: 'stockroom' as const };
}

const planoConvex = (sku: string, radiusMm = 51.7) => ({
	sku,
	name: `Test plano-convex ${sku}`,
	kind: 'plano-convex',
	diameterMm: 25.4,
	surfaces: [{ radiusMm, thicknessMm: 4, material: '517642' }, { radiusMm: null }],
	coating: 'test-coat',
	supplier: 'Kestrelmoor Optics',
	unitPrice: 24.5,
	currency: 'EUR'
});

describe('parts service', () => {
	it('creates a part and stores its EFL at the default wavelength, computed from the prescription', async () => {
		const { id } = await parts.createPart(db, planoConvex(`${tag}-PC1`), await actor());
		created.push(id);
		const json = await parts.getPartJson(db, id);
		// Plano-convex thick lens with the flat side last: f = R/(n − 1), independent of the
		// thickness (Hecht, Optics, 5th ed. 2017, §6.2.1 thick lenses; from memory).
		const n = refractiveIndex('517642', 587.6);
		expect(json.computed.source).toBe('prescription');
		expect(json.computed.wavelengthNm).toBe(587.6);
		expect(json.computed.eflMm).toBeCloseTo(51.7 / (n - 1), 4);
		expect(json.surfaces).toEqual([{ radiusMm: 51.7, thicknessMm: 4, material: '517642' }, { radiusMm: null }]);
		expect(json.supplier).toBe('Kestrelmoor Optics');
		expect(json.unitPrice).toBe(24.5);
		expect((await db.select().from(t.parts).where(eq(t.parts.id, json.id)))[0].unitPriceMinor).toBe(2450);
		expect(json.onHand).toBe(0);
		expect(json.measured).toBeNull();
	});

	it('refuses impossible prescriptions with a message at the field', async () => {
		const bad = planoConvex(`${tag}-BAD`, 10); // radius 10 mm cannot span 25.4 mm
		const err = await parts.createPart(db, bad, await actor()).catch((e) => e);
		expect(err).toBeInstanceOf(ZodError);
		expect(err.issues.map((i: { path: unknown[] }) => i.path.join('.'))).toContain('surfaces.0.radiusMm');
		const unknownGlass = { ...planoConvex(`${tag}-BAD2`), surfaces: [{ radiusMm: 60, thicknessMm: 4, material: 'unobtainium' }, { radiusMm: null }] };
		const err2 = await parts.createPart(db, unknownGlass, await actor()).catch((e) => e);
		expect(err2.issues.map((i: { path: unknown[] }) => i.path.join('.'))).toContain('surfaces.0.material');
		const extra = await parts.createPart(db, { ...planoConvex(`${tag}-BAD3`), role: 'admin' }, await actor()).catch((e) => e);
		expect(extra).toBeInstanceOf(ZodError);
	});

	it('refuses a duplicate SKU with 409', async () => {
		const err = await parts.createPart(db, planoConvex(`${tag}-PC1`), await actor()).catch((e) => e);
		expect(err).toBeInstanceOf(DomainError);
		expect(err.status).toBe(409);
		expect(err.fields).toHaveProperty('sku');
	});

	it('uses the latest measurement, rescaled, and marks it', async () => {
		const { id } = await parts.createPart(db, planoConvex(`${tag}-PC2`, 103.4), await actor());
		created.push(id);
		await recordMeasurement(db, id, { eflMm: 199, wavelengthNm: 632.8, measuredAt: '2026-01-01T10:00:00Z' }, await actor());
		await recordMeasurement(db, id, { eflMm: 201, wavelengthNm: 632.8, measuredAt: '2026-02-01T10:00:00Z' }, await actor());
		const json = await parts.getPartJson(db, id);
		expect(json.measured?.eflMm).toBe(201);
		expect(json.computed.source).toBe('measured');
		// Rescaled from 632.8 nm to 587.6 nm: f(587.6) = 201 · (n(632.8) − 1)/(n(587.6) − 1) for a plano lens.
		const ratio = (refractiveIndex('517642', 632.8) - 1) / (refractiveIndex('517642', 587.6) - 1);
		expect(json.computed.eflMm).toBeCloseTo(201 * ratio, 3);
	});

	it('lets a purchaser patch only purchasing fields', async () => {
		const id = created[0];
		await parts.updatePart(db, id, { reorderPoint: 3, unitPrice: 26 }, { id: (await actor()).id, role: 'purchaser' });
		const json = await parts.getPartJson(db, id);
		expect(json.reorderPoint).toBe(3);
		expect(json.unitPrice).toBe(26);
		const err = await parts.updatePart(db, id, { name: 'renamed' }, { id: (await actor()).id, role: 'purchaser' }).catch((e) => e);
		expect(err.status).toBe(403);
	});

	it('replaces surfaces on update and recomputes the EFL', async () => {
		const id = created[0];
		await parts.updatePart(db, id, { surfaces: [{ radiusMm: 103.4, thicknessMm: 4, material: '517642' }, { radiusMm: -103.4 }], kind: 'biconvex' }, await actor());
		const json = await parts.getPartJson(db, id);
		expect(json.surfaces).toHaveLength(2);
		expect(json.kind).toBe('biconvex');
		// Equiconvex, thick: 1/f = (n−1)(2/R) − (n−1)² t/(n R²) (lensmaker's equation, Hecht §6.2.1, from memory).
		const n = refractiveIndex('517642', 587.6);
		const f = 1 / ((n - 1) * (2 / 103.4) - ((n - 1) ** 2 * 4) / (n * 103.4 ** 2));
		expect(json.computed.eflMm).toBeCloseTo(f, 4);
	});

	it('lists with filters, sort and paging', async () => {
		const all = await parts.listParts(db, { q: tag, sort: 'eflMm', order: 'desc' });
		expect(all.total).toBe(2);
		expect(all.items[0].computed.eflMm!).toBeGreaterThan(all.items[1].computed.eflMm!);
		const ranged = await parts.listParts(db, { q: tag, eflMin: 150, eflMax: 250 });
		expect(ranged.items.map((p) => p.sku)).toEqual([`${tag}-PC2`]);
		const paged = await parts.listParts(db, { pageSize: 10, page: 2 });
		expect(paged.items).toHaveLength(10);
		expect(paged.total).toBeGreaterThanOrEqual(90);
		const none = await parts.listParts(db, { q: "' OR 1=1 --" });
		expect(none.total).toBe(0);
		expect(() => parts.listQuerySchema.parse({ sort: 'password' })).toThrow();
		expect(() => parts.listQuerySchema.parse({ pageSize: 1000 })).toThrow();
	});

	it('archives a part with history and deletes one without', async () => {
		const { id } = await parts.createPart(db, planoConvex(`${tag}-DEL`), await actor());
		expect((await parts.archivePart(db, id, await actor())).outcome).toBe('deleted');
		expect(await parts.getPart(db, id)).toBeNull();
		const withHistory = created[1]; // has measurements
		expect((await parts.archivePart(db, withHistory, await actor())).outcome).toBe('archived');
		expect((await parts.listParts(db, { q: tag })).total).toBe(1);
		await parts.restorePart(db, withHistory, await actor());
	});
});
