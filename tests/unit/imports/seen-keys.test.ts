import { describe, expect, it } from 'vitest';
import { BatchSeen, type RowKeys, type SeenRow, type SeenStore } from '$lib/server/imports/seen-keys';

/** The seen-key store in a Map, so the rules of BatchSeen are tested without a database. */
function memorySeenStore(): SeenStore & { size: () => number } {
	const map = new Map<string, SeenRow>();
	return {
		mayHave: (key) => map.has(key),
		async lookup(keys) {
			return new Map(keys.flatMap((k) => (map.has(k) ? [[k, map.get(k)!] as const] : [])));
		},
		async insert(entries) {
			for (const [k, r] of entries) map.set(k, r);
		},
		async close() {},
		size: () => map.size
	};
}

const keys = (k: Partial<{ partId: number; sku: string; supplier: string; pn: string }>): RowKeys => ({
	partId: k.partId ?? null,
	sku: k.sku ?? null,
	supplier: k.supplier ?? null,
	pn: k.pn ?? null
});

describe('the duplicate check of an import run', () => {
	it('finds an earlier row by part, by SKU (any case) and by supplier and part number (any case), across batches', async () => {
		const store = memorySeenStore();
		const first = await BatchSeen.load(store, [keys({ partId: 7, sku: 'A-1', supplier: 'Kestrelmoor Optics', pn: 'KM-1' })]);
		expect(first.find(keys({ partId: 7 }))).toBeUndefined();
		first.add(keys({ partId: 7, sku: 'A-1', supplier: 'Kestrelmoor Optics', pn: 'KM-1' }), 'A-1', { row: 2, hash: 0xdeadbeef });
		// Within the batch, before it is flushed.
		expect(first.find(keys({ sku: 'a-1' }))).toEqual({ row: 2, hash: 0xdeadbeef });
		await first.flush(store);

		const probes = [
			keys({ partId: 7 }),
			keys({ sku: 'a-1' }),
			keys({ supplier: 'KESTRELMOOR optics', pn: 'km-1' }),
			keys({ partId: 8, sku: 'A-2', supplier: 'Kestrelmoor Optics', pn: 'KM-2' }),
			keys({ supplier: 'Brightwick Components', pn: 'KM-1' }),
			keys({ pn: 'KM-1' })
		];
		const next = await BatchSeen.load(store, probes);
		expect(next.find(probes[0])).toEqual({ row: 2, hash: 0xdeadbeef });
		expect(next.find(probes[1])).toEqual({ row: 2, hash: 0xdeadbeef });
		expect(next.find(probes[2])).toEqual({ row: 2, hash: 0xdeadbeef });
		expect(next.find(probes[3])).toBeUndefined();
		// The part number alone is not a key: it belongs to a supplier.
		expect(next.find(probes[4])).toBeUndefined();
		expect(next.find(probes[5])).toBeUndefined();
	});

	it('records the stored SKU too, and tries part, SKU, part number in that order', async () => {
		const store = memorySeenStore();
		const a = await BatchSeen.load(store, []);
		// A row without a SKU column that updates part 3 (stored SKU B-3).
		a.add(keys({ partId: 3, supplier: 'S', pn: 'P3' }), 'B-3', { row: 5, hash: 1 });
		a.add(keys({ sku: 'C-4', supplier: 'S', pn: 'P4' }), 'C-4', { row: 6, hash: 2 });
		await a.flush(store);
		const probes = [keys({ partId: 3, sku: 'C-4', supplier: 'S', pn: 'P4' }), keys({ partId: 9, sku: 'C-4', supplier: 'S', pn: 'P3' }), keys({ partId: 9, sku: 'X', supplier: 's', pn: 'p3' })];
		const b = await BatchSeen.load(store, [...probes, keys({ sku: 'b-3' }), keys({ sku: 'D-5' })]);
		expect(b.hasSku('b-3')).toBe(true);
		expect(b.hasSku('C-4')).toBe(true);
		expect(b.hasSku('D-5')).toBe(false);
		expect(b.find(probes[0])?.row).toBe(5);
		expect(b.find(probes[1])?.row).toBe(6);
		expect(b.find(probes[2])?.row).toBe(5);
	});

	it('keeps the latest row under a key and loads only the keys a batch asks for', async () => {
		const store = memorySeenStore();
		const n = 5000;
		const a = await BatchSeen.load(store, []);
		for (let i = 0; i < n; i++) a.add(keys({ sku: `S-${i}`, supplier: 'S', pn: `P-${i}` }), `S-${i}`, { row: i + 2, hash: (i * 2654435761) >>> 0 });
		await a.flush(store);
		expect(store.size()).toBe(2 * n);
		const b = await BatchSeen.load(store, [keys({ sku: 'S-10' })]);
		b.add(keys({ sku: 'S-10' }), 'S-10', { row: 9999, hash: 3 });
		await b.flush(store);
		const c = await BatchSeen.load(store, [keys({ sku: 's-10' }), keys({ supplier: 'S', pn: 'P-10' }), keys({ sku: `S-${n - 1}` })]);
		expect(c.find(keys({ sku: 's-10' }))).toEqual({ row: 9999, hash: 3 });
		expect(c.find(keys({ supplier: 'S', pn: 'P-10' }))?.row).toBe(12);
		expect(c.find(keys({ sku: `S-${n - 1}` }))).toEqual({ row: n + 1, hash: ((n - 1) * 2654435761) >>> 0 });
		// A key no row of the batch has is not loaded.
		expect(c.find(keys({ sku: 'S-11' }))).toBeUndefined();
	});
});
