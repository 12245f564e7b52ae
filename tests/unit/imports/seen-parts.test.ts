import { describe, expect, it } from 'vitest';
import { SeenParts } from '$lib/server/imports/seen-parts';

const keys = (k: Partial<{ partId: number; sku: string; supplier: string; pn: string }>) => ({
	partId: k.partId ?? null,
	sku: k.sku ?? null,
	supplier: k.supplier ?? null,
	pn: k.pn ?? null
});

describe('the duplicate check of an import run', () => {
	it('finds an earlier row by part, by SKU (any case) and by supplier and part number (any case)', () => {
		const seen = new SeenParts();
		seen.add(keys({ partId: 7, sku: 'A-1', supplier: 'Kestrelmoor Optics', pn: 'KM-1' }), 'A-1', { row: 2, hash: 0xdeadbeef });
		expect(seen.find(keys({ partId: 7 }))).toEqual({ row: 2, hash: 0xdeadbeef });
		expect(seen.find(keys({ sku: 'a-1' }))).toEqual({ row: 2, hash: 0xdeadbeef });
		expect(seen.find(keys({ supplier: 'KESTRELMOOR optics', pn: 'km-1' }))).toEqual({ row: 2, hash: 0xdeadbeef });
		expect(seen.find(keys({ partId: 8, sku: 'A-2', supplier: 'Kestrelmoor Optics', pn: 'KM-2' }))).toBeUndefined();
		// The part number alone is not a key: it belongs to a supplier.
		expect(seen.find(keys({ supplier: 'Brightwick Components', pn: 'KM-1' }))).toBeUndefined();
		expect(seen.find(keys({ pn: 'KM-1' }))).toBeUndefined();
	});

	it('records the stored SKU too, and tries part, SKU, part number in that order', () => {
		const seen = new SeenParts();
		// A row without a SKU column that updates part 3 (stored SKU B-3).
		seen.add(keys({ partId: 3, supplier: 'S', pn: 'P3' }), 'B-3', { row: 5, hash: 1 });
		seen.add(keys({ sku: 'C-4', supplier: 'S', pn: 'P4' }), 'C-4', { row: 6, hash: 2 });
		expect(seen.hasSku('b-3')).toBe(true);
		expect(seen.hasSku('C-4')).toBe(true);
		expect(seen.hasSku('D-5')).toBe(false);
		expect(seen.find(keys({ partId: 3, sku: 'C-4', supplier: 'S', pn: 'P4' }))?.row).toBe(5);
		expect(seen.find(keys({ partId: 9, sku: 'C-4', supplier: 'S', pn: 'P3' }))?.row).toBe(6);
		expect(seen.find(keys({ partId: 9, sku: 'X', supplier: 's', pn: 'p3' }))?.row).toBe(5);
	});

	it('keeps every row past the initial capacity, with the latest row under a key', () => {
		const seen = new SeenParts();
		const n = 5000;
		for (let i = 0; i < n; i++) seen.add(keys({ sku: `S-${i}`, supplier: 'S', pn: `P-${i}` }), `S-${i}`, { row: i + 2, hash: (i * 2654435761) >>> 0 });
		for (const i of [0, 1023, 1024, 2047, 2048, n - 1]) {
			expect(seen.find(keys({ sku: `s-${i}` }))).toEqual({ row: i + 2, hash: (i * 2654435761) >>> 0 });
			expect(seen.find(keys({ supplier: 'S', pn: `P-${i}` }))?.row).toBe(i + 2);
		}
		seen.add(keys({ sku: 'S-10' }), 'S-10', { row: 9999, hash: 3 });
		expect(seen.find(keys({ sku: 'S-10' }))).toEqual({ row: 9999, hash: 3 });
		expect(seen.find(keys({ supplier: 'S', pn: 'P-10' }))?.row).toBe(12);
	});
});
