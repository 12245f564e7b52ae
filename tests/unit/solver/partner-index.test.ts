/**
 * The output-sensitive pair search (partner-index.ts: a row visits only the partners whose power
 * can give a physical root) finds exactly what the brute-force search finds (every partner of every
 * row, `bruteForce: true`): over seeded random stocks of invented parts (the synthetic singlets,
 * positive and negative, plus afocal windows, strong thick menisci and black boxes) and random
 * questions (magnifications of both signs, track tolerances, limits of 0 and more), the same
 * physical roots and records in the screening pass (every root kept) and in the bounding pass
 * (every root bounded), while far fewer configurations are visited.
 * The reference is our own brute force (the same kernel over every pair), no outside source.
 */
import { describe, expect, it } from 'vitest';
import { buildElementSnapshot, type CandidatePart } from '../../../src/lib/server/solver/elements';
import { searchShard, REC_STRIDE, REC_SCORE, type SearchParams, type ShardInput, type ShardResult, snapshotArrays } from '../../../src/lib/solver/search/search-kernel';
import { partnerIndex, partnerRanges } from '../../../src/lib/solver/search/partner-index';
import { mulberry32 } from '../../../src/lib/prng';
import { syntheticStock } from '../../bench/_synthetic-stock';

/** The synthetic stock with a few parts that are not ordinary lenses. */
function stockOf(count: number, seed: number): CandidatePart[] {
	const parts = syntheticStock(count, seed);
	const like = parts[0];
	const extra = (k: number, p: Partial<CandidatePart>): CandidatePart => ({ ...like, partId: 50000 + k, sku: `X-${seed}-${k}`, name: `Extra ${k}`, measured: null, ...p });
	parts.push(
		// Afocal windows (C = 0), one thick.
		extra(1, { kind: 'window', diameterMm: 25.4, surfaces: [{ radiusMm: null, thicknessMm: 3, material: '517642' }, { radiusMm: null }], eflMm: null }),
		extra(2, { kind: 'window', diameterMm: 25.4, surfaces: [{ radiusMm: null, thicknessMm: 20, material: 'fused-silica' }, { radiusMm: null }], eflMm: null }),
		// A strong thick meniscus (principal planes outside the glass) and a weak one.
		extra(3, { kind: 'meniscus', diameterMm: 12.7, surfaces: [{ radiusMm: 12, thicknessMm: 6, material: '785258' }, { radiusMm: 30 }], eflMm: null }),
		extra(4, { kind: 'meniscus', diameterMm: 25.4, surfaces: [{ radiusMm: 40, thicknessMm: 8, material: '517642' }, { radiusMm: 45 }], eflMm: null }),
		// Black boxes (datasheet numbers only), positive and negative.
		extra(5, { kind: 'black box', surfaces: [], eflMm: 60, bflMm: 52, centerThicknessMm: 9 }),
		extra(6, { kind: 'black box', surfaces: [], eflMm: -80, bflMm: -83, centerThicknessMm: 3 })
	);
	return parts;
}

function inputOf(parts: CandidatePart[], seed: number, params: SearchParams): Omit<ShardInput, 'topK'> {
	const r = mulberry32(seed * 31);
	const snap = buildElementSnapshot(parts, params.wavelengthNm);
	return {
		...snapshotArrays(snap),
		// Some parts with one unit only (the same part cannot be used twice).
		partUnits: Int32Array.from(snap.parts.map(() => 1 + Math.floor(r() * 3))),
		candidates: Int32Array.from(snap.elements.map((_, e) => e)),
		params,
		shardIndex: 0,
		shardCount: 1,
		deadline: Date.now() + 600_000
	};
}

function questionOf(seed: number): SearchParams {
	const r = mulberry32(seed * 7717);
	const pick = <T>(xs: T[]) => xs[Math.floor(r() * xs.length)];
	return {
		trackMm: pick([60, 150, 250, 400, 900]),
		trackToleranceMm: pick([0, 0, 2, 25]),
		magnification: pick([-0.1, -0.5, -1, -3, 0.4, 1, 2.5]),
		magnificationTolerance: 0.02,
		objectNA: 0.05,
		objectHeightMm: 1,
		minGapMm: pick([0, 1, 3]),
		minWorkingDistanceMm: pick([0, 2, 5, 20]),
		maxElements: 2,
		wavelengthNm: 587.6,
		rankByBand: false,
		limit: 10
	};
}

/** The records as strings (elements, placement, flags, key, track), sorted. */
function records(r: ShardResult, first = r.count): string[] {
	const out: string[] = [];
	for (let k = 0; k < first; k++) {
		const rec = r.records.subarray(k * REC_STRIDE, (k + 1) * REC_STRIDE);
		out.push(Array.from(rec).join(','));
	}
	return out.sort();
}

describe('the pair search by partner ranges', () => {
	it('keeps every physical root of the brute-force search over random stocks and questions, visiting fewer configurations', () => {
		let brute = 0,
			ranged = 0,
			roots = 0;
		for (let seed = 1; seed <= 24; seed++) {
			const parts = stockOf(40 + ((seed * 37) % 80), seed);
			const params = questionOf(seed);
			const input = inputOf(parts, seed, params);
			const a = searchShard({ ...input, topK: Infinity, bruteForce: true });
			const b = searchShard({ ...input, topK: Infinity });
			const where = `seed ${seed}, ${JSON.stringify(params)}`;
			expect(b.physicalRoots, where).toBe(a.physicalRoots);
			expect(records(b), where).toEqual(records(a));
			expect(b.truncated).toBe(false);
			brute += a.configurationsEvaluated;
			ranged += b.configurationsEvaluated;
			roots += a.physicalRoots;
		}
		expect(roots).toBeGreaterThan(10_000);
		// Measured: about a third of the brute-force configurations on these stocks.
		expect(ranged).toBeLessThan(0.6 * brute);
	});

	it('bounds the same roots in the bounding pass, and keeps the same best ones when the bar falls', () => {
		for (let seed = 101; seed <= 106; seed++) {
			const parts = stockOf(50, seed);
			const q = questionOf(seed);
			// The bar never falls when no N answers can be found: every root in the window is kept.
			const every = inputOf(parts, seed, { ...q, limit: 1e9 });
			const range = { min: -Infinity, max: Infinity };
			const a = searchShard({ ...every, topK: Infinity, boundRange: range, bruteForce: true });
			const b = searchShard({ ...every, topK: Infinity, boundRange: range });
			expect(b.physicalRoots).toBe(a.physicalRoots);
			expect(records(b)).toEqual(records(a));
			// With N = 10 the bar falls as answers are bounded, at different times in either order;
			// every root bounded at or below the final bar is kept by both, so the best N agree.
			const ten = inputOf(parts, seed, q);
			const c = searchShard({ ...ten, topK: Infinity, boundRange: range, bruteForce: true });
			const d = searchShard({ ...ten, topK: Infinity, boundRange: range });
			const n = Math.min(10, c.count);
			expect(d.count).toBeGreaterThanOrEqual(n);
			expect(records(d, n)).toEqual(records(c, n));
			if (n > 0) expect(d.records[(n - 1) * REC_STRIDE + REC_SCORE]).toBe(c.records[(n - 1) * REC_STRIDE + REC_SCORE]);
		}
	});

	it('sorts the partners by power, leaves afocal ones to every row, and writes sorted disjoint ranges', () => {
		const parts = stockOf(80, 3);
		const snap = buildElementSnapshot(parts, 587.6);
		const ix = partnerIndex(snap.packed, Int32Array.from(snap.elements.map((_, e) => e)));
		for (let k = 1; k < ix.sorted; k++) expect(ix.power[k]).toBeGreaterThanOrEqual(ix.power[k - 1]);
		const afocal = snap.elements.map((_, e) => e).filter((e) => snap.packed[e * 13 + 2] === 0);
		expect(afocal.length).toBeGreaterThan(0);
		for (const e of afocal) expect(Array.from(ix.order.subarray(ix.sorted))).toContain(e);
		const q = { trackMm: 300, trackToleranceMm: 0, magnification: -0.5, minGapMm: 1, minWorkingDistanceMm: 5 };
		for (let i = 0; i < snap.elements.length; i++) {
			const o = i * 13;
			const n = partnerRanges(ix, q, snap.packed[o], snap.packed[o + 1], snap.packed[o + 2], snap.packed[o + 3], snap.packed[o + 4]);
			let last = -1;
			for (let r = 0; r < n; r++) {
				expect(ix.ranges[2 * r]).toBeGreaterThan(last);
				expect(ix.ranges[2 * r + 1]).toBeGreaterThan(ix.ranges[2 * r]);
				last = ix.ranges[2 * r + 1] - 1;
			}
			// The afocal partners are in every row's last range.
			expect(ix.ranges[2 * n - 1]).toBe(ix.order.length);
		}
	});
});
