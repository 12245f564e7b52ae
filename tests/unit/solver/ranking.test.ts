/**
 * The order of Build from stock's answers (rankKey): an answer that does what was asked (no
 * vignetting: the whole cone of the requested NA and the whole field pass) comes before one that
 * clips the field edge, which comes before one that clips the marginal ray on axis, whatever their
 * spots; then spot bands, working distance, part count. Rules of this product (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import { compareKeys, decidingStep, rankKey, shownSpotBand, vignettingClass } from '../../../src/lib/solver/ranking';
import { imagingRequestSchema } from '../../../src/lib/solver/request';
import type { Solution } from '../../../src/lib/solver/types';

type Answer = Omit<Solution, 'rank'>;
const answer = (o: { ratio: number | null; axial?: boolean; edge?: boolean; blocked?: boolean; band?: number | null; wd?: number; parts?: number }): Answer =>
	({
		spot: { ratioToAiry: o.ratio },
		vignetting: { axial: o.axial ?? false, edge: o.edge ?? false, edgeBlocked: o.blocked ?? false },
		colour: o.band === undefined ? undefined : { ratioToAiry: o.band },
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

	it('puts a blocked field edge after every answer that images the whole field, even one that cuts the NA on axis, and shows it no spot band', () => {
		const blocked = answer({ ratio: 0.6, edge: true, blocked: true });
		const axialCut = answer({ ratio: 4, axial: true, edge: true });
		const edgeVignetted = answer({ ratio: 3, edge: true });
		expect(order([blocked, axialCut, edgeVignetted])).toEqual([edgeVignetted, axialCut, blocked]);
		expect(vignettingClass(blocked)).toBe(3);
		expect(decidingStep(axialCut, blocked)).toBe('vignetting');
		expect(shownSpotBand(blocked)).toBeNull();
		expect(shownSpotBand(edgeVignetted)).toBeGreaterThan(0);
		expect(shownSpotBand(answer({ ratio: 0.6 }))).toBe(0);
	});

	it('ranks by the band figures when asked, by the monochromatic ones by default', () => {
		const sharpMono = answer({ ratio: 0.8, band: 6 });
		const sharpBand = answer({ ratio: 2, band: 2.1 });
		expect(order([sharpBand, sharpMono])).toEqual([sharpMono, sharpBand]);
		const byBand = [sharpMono, sharpBand].sort((a, b) => compareKeys(rankKey(a, 'band'), rankKey(b, 'band')));
		expect(byBand).toEqual([sharpBand, sharpMono]);
		expect(decidingStep(sharpBand, sharpMono, 'band')).toBe('spot band');
		// No band figures (a part without a model at a band end): after every answer that has them.
		const none = answer({ ratio: 0.5, band: null });
		expect([none, sharpMono].sort((a, b) => compareKeys(rankKey(a, 'band'), rankKey(b, 'band')))).toEqual([sharpMono, none]);
	});

	it('the request takes rankBy "monochromatic" (default) or "band", and names the field otherwise', () => {
		const base = { trackMm: 300, magnification: -1, objectNA: 0.05 };
		expect(imagingRequestSchema.parse(base).rankBy).toBe('monochromatic');
		expect(imagingRequestSchema.parse({ ...base, rankBy: 'band' }).rankBy).toBe('band');
		const bad = imagingRequestSchema.safeParse({ ...base, rankBy: 'colour' });
		expect(bad.success).toBe(false);
		if (!bad.success) {
			expect(bad.error.issues[0].path).toEqual(['rankBy']);
			expect(bad.error.issues[0].message).toMatch(/rankBy must be/);
		}
	});
});
