/**
 * The order of Build from stock's answers (rankKey): an answer that does what was asked (no
 * vignetting: the whole cone of the requested NA and the whole field pass) comes before one that
 * clips the field edge, which comes before one that clips the marginal ray on axis, whatever their
 * spots; then spot bands, working distance, part count. Rules of this product (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import { compareKeys, decidingStep, rankKey } from '../../../src/lib/solver/ranking';
import type { Solution } from '../../../src/lib/solver/types';

type Answer = Omit<Solution, 'rank'>;
const answer = (o: { ratio: number | null; axial?: boolean; edge?: boolean; wd?: number; parts?: number }): Answer =>
	({
		spot: { ratioToAiry: o.ratio },
		vignetting: { axial: o.axial ?? false, edge: o.edge ?? false },
		objectDistanceMm: o.wd ?? 100,
		backDistanceMm: o.wd ?? 100,
		elements: Array.from({ length: o.parts ?? 2 }, () => ({}))
	}) as unknown as Answer;

const order = (xs: Answer[]) => [...xs].sort((a, b) => compareKeys(rankKey(a), rankKey(b)));

describe('ranking of answers', () => {
	it('puts answers without vignetting first, then field-edge vignetting, then on-axis vignetting, whatever the spot', () => {
		const clean = answer({ ratio: 3.0 });
		const edge = answer({ ratio: 1.1, edge: true });
		const axial = answer({ ratio: 0.8, axial: true });
		expect(order([axial, edge, clean])).toEqual([clean, edge, axial]);
		expect(decidingStep(clean, axial)).toBe('vignetting');
	});

	it('then orders by spot band (diffraction-limited answers tie), working distance in 10 mm steps, part count', () => {
		const a = answer({ ratio: 0.9, wd: 55 });
		const b = answer({ ratio: 0.5, wd: 41 }); // same band (≤ 1), shorter working distance
		const c = answer({ ratio: 1.2, wd: 300 }); // band (1, 1.25]
		const d = answer({ ratio: 0.7, wd: 58, parts: 1 }); // same band and step as a, fewer parts
		expect(order([c, b, a, d])).toEqual([d, a, b, c]);
		expect(decidingStep(a, b)).toBe('working distance');
		expect(decidingStep(b, c)).toBe('spot band');
		expect(decidingStep(d, a)).toBe('part count');
	});

	it('puts answers not traced with real rays after every traced one of the same vignetting', () => {
		expect(order([answer({ ratio: null }), answer({ ratio: 40 })]).map((x) => x.spot.ratioToAiry)).toEqual([40, null]);
	});
});
