import { eq, inArray, like } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { objectStoreFromEnv } from '../../../src/lib/server/files/s3';
import * as importsService from '../../../src/lib/server/imports/service';

export const { db, pool } = testDb();
export const store = objectStoreFromEnv(process.env);
export const enc = (s: string) => new TextEncoder().encode(s);

export async function stockroomId(): Promise<number> {
	const [u] = await db.select({ id: t.users.id }).from(t.users).where(eq(t.users.role, 'stockroom')).limit(1);
	return u.id;
}

/** Uploads a CSV text and saves a mapping (default: the suggested one). */
export async function upload(text: string, opts: { supplierId?: number | null; mapping?: Record<string, string>; units?: Record<string, string>; skuPrefix?: string; skipRejected?: boolean } = {}) {
	const actorId = await stockroomId();
	const created = await importsService.createImport(db, store, { filename: 'test.csv', file: enc(text), supplierId: opts.supplierId ?? null, actorId });
	await importsService.saveMapping(db, created.id, {
		mapping: opts.mapping ?? created.suggestion.mapping,
		units: opts.units ?? created.suggestion.units,
		skuPrefix: opts.skuPrefix ?? '',
		skipRejected: opts.skipRejected ?? false
	});
	return { id: created.id, actorId, suggestion: created.suggestion };
}

/** Removes parts (and their surfaces) whose SKU starts with `prefix`; they have no stock or ledger. */
export async function deleteParts(prefix: string) {
	for (;;) {
		const ids = (await db.select({ id: t.parts.id }).from(t.parts).where(like(t.parts.sku, `${prefix}%`)).limit(5000)).map((r) => r.id);
		if (!ids.length) return;
		await db.delete(t.partSurfaces).where(inArray(t.partSurfaces.partId, ids));
		await db.delete(t.parts).where(inArray(t.parts.id, ids));
	}
}

export async function countParts(prefix: string) {
	return (await db.select({ id: t.parts.id }).from(t.parts).where(like(t.parts.sku, `${prefix}%`))).length;
}

/** A plano-convex row in the export's format (radius from f = R/(n-1), glass 517642). */
export function pcxRow(sku: string, i: number) {
	const r = (50 + (i % 400) * 0.5).toFixed(2);
	return [sku, `Imported plano-convex ${i}`, 'plano-convex', '25.4', r, '4', '517642', '', '', '', '', 'Kestrelmoor Optics', `KM-IMP-${sku}`, (15 + (i % 100) / 100).toFixed(2)].join(','); // unitPrice in currency units (15.07)
}
export const PCX_HEADER = 'sku,name,kind,diameterMm,r1Mm,t1Mm,material1,r2Mm,t2Mm,material2,coating,supplier,supplierPartNumber,unitPrice';
