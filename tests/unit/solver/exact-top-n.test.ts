/**
 * The answers are the true best N by the product's ranking key among every physical root: over seeded random
 * stocks of 40 to 200 invented parts (singlets, doublets, a few black boxes, some parts coated for another band),
 * the solver's branch and bound (a screening pass, then bounding passes that trace only roots whose rank bound can
 * still beat the N-th answer) returns exactly the first N of a ranking that traces every physical root.
 * The reference is our own brute force (`keepAll`: every root traced and ranked), no outside source.
 */
import { describe, expect, it } from 'vitest';
import { solveWithStock, type StockView } from '../../../src/lib/server/solver/solve';
import { imagingRequestSchema, type ParsedImagingRequest } from '../../../src/lib/solver/request';
import { rankKey } from '../../../src/lib/solver/ranking';
import type { Solution } from '../../../src/lib/solver/types';
import type { CandidatePart } from '../../../src/lib/server/solver/elements';
import { mulberry32 } from '../../../src/lib/prng';
import { syntheticStock } from '../../bench/_synthetic-stock';

/** A random stock: the synthetic one, some parts coated for 1050–1700 nm only, and two black boxes (datasheet numbers only). */
function stockOf(count: number, seed: number): StockView {
	const r = mulberry32(seed * 7919);
	const parts: CandidatePart[] = syntheticStock(count - 2, seed).map((p) => (r() < 0.15 ? { ...p, coating: 'AR 1050–1700 nm', coatingBandNm: { minNm: 1050, maxNm: 1700 } } : p));
	for (const [k, f] of [50, 100].entries()) {
		parts.push({
			...parts[0],
			partId: 100000 + k,
			sku: `BB-${seed}-${k}`,
			name: `Black box f = ${f} mm`,
			surfaces: [],
			eflMm: f,
			bflMm: f - 2,
			centerThicknessMm: 4,
			designWavelengthNm: 587.6,
			measured: null,
			coating: null,
			coatingBandNm: null
		});
	}
	return { key: `exact-${count}-${seed}`, parts };
}

/** A random imaging question. */
function questionOf(seed: number, extra: Record<string, unknown> = {}): ParsedImagingRequest {
	const r = mulberry32(seed * 104729);
	const pick = <T>(xs: T[]) => xs[Math.floor(r() * xs.length)];
	return imagingRequestSchema.parse({
		wavelengthNm: 587.6,
		trackMm: pick([150, 220, 300, 400, 600]),
		magnification: pick([-0.25, -0.5, -1, -2, -4, 1]),
		objectNA: pick([0.02, 0.05, 0.08]),
		objectHeightMm: pick([0, 1, 2.5]),
		minGapMm: 1,
		minWorkingDistanceMm: 5,
		limit: pick([10, 20, 50]),
		trackToleranceMm: pick([0, 0, 2]),
		...extra
	}) as ParsedImagingRequest;
}

/** What identifies an answer and its place: key, parts and their turn, positions. */
function described(s: Solution): string {
	const key = rankKey(s).map((x) => (Number.isFinite(x) ? +x.toPrecision(10) : x));
	return `${key.join(',')} | ${s.elements.map((e) => `${e.sku}${e.reversed ? '↺' : ''}`).join('+')} | ${s.objectDistanceMm.toFixed(6)} ${s.gapsMm.map((g) => g.toFixed(6)).join(' ')}`;
}

async function compare(stock: StockView, req: ParsedImagingRequest, inline: boolean): Promise<void> {
	const r = await solveWithStock(stock, req, { inline });
	const all = await solveWithStock(stock, req, { inline: true, keepAll: true });
	expect(r.stats.provenBest).toBe(true);
	const want = all.solutions.slice(0, req.limit).map(described);
	expect(r.solutions.map(described)).toEqual(want);
	// And it did not trace everything to know it (the brute force traced every physical root).
	if (all.stats.traced > 4 * TRACED_SCREEN) expect(r.stats.traced).toBeLessThan(all.stats.traced);
}

/** The screening pass traces at most this many (solve.ts TRACE_COUNT). */
const TRACED_SCREEN = 480;

describe('exact top-N: branch and bound equals tracing every physical root', () => {
	const cases: [number, number][] = [
		[40, 1],
		[40, 2],
		[60, 3],
		[80, 4],
		[100, 5],
		[120, 6],
		[150, 7],
		[200, 8]
	];
	for (const [count, seed] of cases) {
		it(`${count} parts, seed ${seed}`, async () => {
			const stock = stockOf(count, seed);
			for (const q of [questionOf(seed), questionOf(seed + 100)]) await compare(stock, q, true);
		}, 240_000);
	}

	it('on the worker pool (two shards) as inline', async () => {
		await compare(stockOf(90, 11), questionOf(11, { objectHeightMm: 2, magnification: -0.5, trackMm: 300 }), false);
	}, 240_000);

	it('ranked by the colour band (the spot bound is 0 there: the bound still holds)', async () => {
		await compare(stockOf(50, 12), questionOf(12, { rankBy: 'band', limit: 10 }), true);
	}, 240_000);
});
