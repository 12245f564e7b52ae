import { describe, expect, it } from 'vitest';
import { bestSinglePurchase, setupIndex, shortfalls, singlePurchase } from '$lib/server/purchasing/unlocks';

const avail = (m: Record<number, number>) => (id: number) => m[id] ?? 0;

describe('unlocks', () => {
	it('a part used twice needs two units', () => {
		expect(shortfalls([{ partId: 7 }, { partId: 7 }], avail({ 7: 1 }))).toEqual([{ partId: 7, missing: 1 }]);
		expect(shortfalls([{ partId: 7 }, { partId: 7 }], avail({ 7: 2 }))).toEqual([]);
	});

	it('one purchase unlocks a setup short of exactly one part; two short parts need two', () => {
		expect(singlePurchase([{ partId: 1 }, { partId: 2 }], avail({ 1: 1 }))).toEqual({ partId: 2, missing: 1 });
		expect(singlePurchase([{ partId: 1 }, { partId: 2 }], avail({}))).toBeNull();
		expect(singlePurchase([{ partId: 1 }, { partId: 2 }], avail({ 1: 1, 2: 3 }))).toBeNull(); // buildable
	});

	it('the best single purchase is the first ranked solution that needs exactly one', () => {
		const ranked = [
			{ rank: 1, elements: [{ partId: 5 }, { partId: 6 }] }, // needs two purchases
			{ rank: 2, elements: [{ partId: 1 }] }, // buildable: needs nothing
			{ rank: 3, elements: [{ partId: 1 }, { partId: 6 }] }, // one purchase
			{ rank: 4, elements: [{ partId: 5 }] }
		];
		const best = bestSinglePurchase(ranked, avail({ 1: 2 }));
		expect(best?.solution.rank).toBe(3);
		expect(best?.purchase).toEqual({ partId: 6, missing: 1 });
	});

	it('indexes setups by the part that would unlock them', () => {
		const idx = setupIndex(
			[
				{ id: 10, name: 'Relay', elements: [{ partId: 1 }, { partId: 2 }] },
				{ id: 11, name: 'Camera', elements: [{ partId: 2 }] },
				{ id: 12, name: 'Doublet pair', elements: [{ partId: 3 }, { partId: 4 }] }
			],
			avail({ 1: 1 })
		);
		expect(idx.unlocking.get(2)?.map((u) => u.setupId)).toEqual([10, 11]);
		expect(idx.unlocking.has(3)).toBe(false);
		expect(idx.using.get(2)).toEqual([10, 11]);
		expect(idx.using.get(1)).toEqual([10]);
	});
});
