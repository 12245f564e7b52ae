import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import Papa from 'papaparse';
import * as t from '../../../src/lib/server/db/schema';
import * as importsService from '../../../src/lib/server/imports/service';
import { createPart } from '../../../src/lib/server/catalogue/parts';
import { testEnv } from '../../support/env';
import { cookieFor } from '../accounts/helpers';
import { db, deleteParts, pool, stockroomId, store, upload } from './helpers';

const tag = `RT${Date.now().toString(36).toUpperCase()}`;
afterAll(async () => {
	await deleteParts(tag);
	await pool.end();
});

async function download(path: string) {
	const cookie = await cookieFor('purchaser@tarnwell.example');
	const res = await fetch(new URL(path, testEnv('APP_URL')), { headers: { cookie } });
	expect(res.status).toBe(200);
	expect(res.headers.get('content-type')).toBe('text/csv; charset=utf-8');
	const bytes = new Uint8Array(await res.arrayBuffer());
	expect([...bytes.subarray(0, 3)]).toEqual([0xef, 0xbb, 0xbf]); // UTF-8 BOM, for spreadsheets
	return new TextDecoder('utf-8', { ignoreBOM: true }).decode(bytes);
}

const records = (csv: string) => Papa.parse<string[]>(csv.replace(/^\uFEFF/, ''), { skipEmptyLines: true }).data;

describe('CSV export and import round trip', () => {
	it('escapes formula cells in the export and the importer reads the whole catalogue back unchanged', async () => {
		const sku = `${tag}-FORMULA`;
		const actorId = await stockroomId();
		await createPart(
			db,
			{
				sku,
				name: '=HYPERLINK("http://evil.example","click")',
				kind: 'biconvex',
				diameterMm: 25.4,
				surfaces: [{ radiusMm: 101.3, thicknessMm: 3.6, material: 'fused-silica' }, { radiusMm: -101.3 }],
				coating: '@broadband',
				notes: '-3 dB at the edge',
				supplier: 'Lumenvale Supply',
				supplierPartNumber: `LV-${tag}`,
				unitPrice: 31.75
			},
			{ id: actorId }
		);
		const csv = await download('/api/v1/parts/export.csv?sort=sku');
		const lines = csv.slice(1).split('\r\n');
		expect(csv.charCodeAt(0)).toBe(0xfeff);
		expect(lines[0]).toBe(
			'id,sku,name,kind,diameterMm,clearApertureMm,eflMm,bflMm,centerThicknessMm,designWavelengthNm,coating,supplier,supplierPartNumber,unitPrice,currency,leadTimeDays,reorderPoint,reorderQuantity,notes,r1Mm,t1Mm,material1,r2Mm,t2Mm,material2,r3Mm,t3Mm,material3,onHand,available'
		);
		const mine = lines.find((l) => l.includes(sku))!;
		expect(mine).toContain(`"'=HYPERLINK(""http://evil.example"",""click"")"`);
		expect(mine).toContain("'@broadband");
		expect(mine).toContain("'-3 dB at the edge");
		expect(mine).toContain(',101.3,3.6,fused-silica,-101.3,');

		const parts = await db.select({ id: t.parts.id }).from(t.parts);
		const { id, suggestion } = await upload(csv);
		// The export's header needs no mapping: every Glasscrib column maps to itself.
		expect(suggestion.mapping.sku).toBe('sku');
		expect(suggestion.mapping.r3Mm).toBe('r3Mm');
		expect(suggestion.units.unitPrice).toBe('major'); // `unitPrice` is currency units, in the export as in the API
		expect(mine).toContain(',31.75,EUR,');
		const out = await importsService.runNow(db, store, id, 'check', actorId);
		expect(out).toMatchObject({ status: 'checked', created: 0, updated: 0, rejected: 0 });
		expect(out.unchanged).toBe(lines.length - 2); // header and the final empty line
		expect(out.unchanged).toBeLessThanOrEqual(parts.length);

		// Commit too, then the part reads back exactly.
		const commit = await importsService.runNow(db, store, id, 'commit', actorId);
		expect(commit.status).toBe('committed');
		const [p] = await db.select().from(t.parts).where(eq(t.parts.sku, sku));
		expect(p.name).toBe('=HYPERLINK("http://evil.example","click")');
		expect(p.coating).toBe('@broadband');
		expect(p.notes).toBe('-3 dB at the edge');
	});

	it('filters the export like the catalogue list', async () => {
		const csv = await download('/api/v1/parts/export.csv?kind=achromatic-doublet');
		const rows = records(csv).slice(1);
		expect(rows.length).toBeGreaterThan(0);
		for (const r of rows) expect(r[3]).toBe('achromatic-doublet');
	});

	it('exports stock by location, and the importer reads it back (every part found, nothing changed)', async () => {
		const csv = await download('/api/v1/stock/export.csv');
		const lines = records(csv);
		expect(lines[0]).toEqual(['locationCode', 'locationName', 'sku', 'name', 'kind', 'diameterMm', 'condition', 'quantity']);
		expect(lines.length).toBeGreaterThan(10);
		const { id, actorId } = await upload(csv);
		const out = await importsService.runNow(db, store, id, 'check', actorId);
		expect(out).toMatchObject({ status: 'checked', created: 0, updated: 0, rejected: 0, unchanged: lines.length - 1 });
	});
});
