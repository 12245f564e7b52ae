/**
 * The figures the saved setup page and the build sheet show for an imaging answer: the spot, the
 * vignetting and any further figure groups the answer carries, read from the answer as they are
 * (nothing is shown that it does not hold). Formatting only: no optics to source here.
 */
import { describe, expect, it } from 'vitest';
import { extraLines, fieldLabel, fieldValue, otherFigureGroups, spotLines, vignettingLines } from '../../../src/lib/components/build/figure-words';
import type { Solution } from '../../../src/lib/solver/types';

const base = (extra: Record<string, unknown> = {}): Solution =>
	({
		rank: 1,
		elements: [],
		objectDistanceMm: 100,
		gapsMm: [],
		backDistanceMm: 100,
		trackMm: 204,
		magnification: -1,
		systemMatrix: { A: -1, B: 0, C: -0.01, D: -1 },
		pointTransferMatrix: [1, 0, 0, 0, 1, 0, 0, 0, 1],
		afocalFamily: false,
		doubleRoot: false,
		spot: { axialRmsMm: 0.0123, edgeRmsMm: 0.0456, airyRadiusMm: 0.0119, ratioToAiry: 3.83, untracedReason: null, screenEstimateMm: 0.01 },
		vignetting: { axial: false, edge: true, worstFill: 1.08 },
		rays: [],
		tolerance: [],
		...extra
	}) as Solution;

const byKey = (lines: { key: string; value: string }[]) => Object.fromEntries(lines.map((l) => [l.key, l.value]));

describe('answer figures', () => {
	it('the spot: RMS on axis and at the edge in µm, the Airy radius and the ratio', () => {
		const v = byKey(spotLines(base()));
		expect(v['spot.axialRmsMm']).toBe('12.3 µm');
		expect(v['spot.edgeRmsMm']).toBe('45.6 µm');
		expect(v['spot.airyRadiusMm']).toBe('11.9 µm');
		expect(v['spot.ratioToAiry']).toBe('3.83×');
		// The screen's estimate is not a figure of the answer.
		expect(v['spot.screenEstimateMm']).toBeUndefined();
	});

	it('an untraced answer says so instead of a number', () => {
		const s = base({ spot: { axialRmsMm: null, edgeRmsMm: null, airyRadiusMm: 0.01, ratioToAiry: null, untracedReason: 'A part has no surfaces.', screenEstimateMm: 0 } });
		const v = byKey(spotLines(s));
		expect(v['spot.axialRmsMm']).toBe('not traced (A part has no surfaces.)');
		expect(v['spot.ratioToAiry']).toBe('not traced');
	});

	it('vignetting: the flags and, when the answer carries them, the fractions of the cone lost', () => {
		expect(byKey(vignettingLines(base()))).toEqual({ 'vignetting.axial': 'no', 'vignetting.edge': 'yes', 'vignetting.worstFill': '1.08×' });
		const s = base({ vignetting: { axial: false, edge: true, worstFill: 1.08, edgeLostFraction: 0.125, axialLostFraction: 0 } });
		const v = byKey(vignettingLines(s));
		expect(v['vignetting.edgeLostFraction']).toBe('12.5 %');
		expect(v['vignetting.axialLostFraction']).toBe('0.0 %');
		expect(vignettingLines(s).find((l) => l.key === 'vignetting.edgeLostFraction')!.label).toBe('Share of the cone lost at the field edge');
		// The stop in words (parts counted from 1), and a figure the solver adds later named from its field name.
		const t = byKey(vignettingLines(base({ vignetting: { axial: false, edge: false, worstFill: 0.3, stop: { partIndex: 0, surface: 3 }, newShareLostFraction: 0.5 } })));
		expect(t['vignetting.stop']).toBe('part 1, surface 3');
		expect(vignettingLines(base({ vignetting: { axial: false, edge: false, worstFill: 0.3, newShareLostFraction: 0.5 } })).find((l) => l.key === 'vignetting.newShareLostFraction')!.label).toBe('New share lost fraction');
	});

	it('further groups (colour over a band) appear only when the answer has them, in the units their names give', () => {
		expect(otherFigureGroups(base())).toEqual([]);
		const s = base({ colour: { bandNm: [486.13, 656.27], axialColourMm: 0.0421, band: { axialRmsMm: 0.0201 }, rankedBy: 'band' } });
		const groups = otherFigureGroups(s);
		expect(groups.map((g) => g.key)).toEqual(['colour']);
		const v = byKey(groups[0].lines);
		expect(v['colour.bandNm']).toBe('486.13–656.27 nm');
		expect(v['colour.axialColourMm']).toBe('42.1 µm');
		expect(v['colour.band.axialRmsMm']).toBe('20.1 µm');
		expect(v['colour.rankedBy']).toBe('band');
		// Answers' own non-figure fields never become a group.
		expect(otherFigureGroups(base({ trackOffsetMm: 1.06 }))).toEqual([]);
	});

	it('names and values from field names', () => {
		expect(fieldLabel('axialFocusShiftMm')).toBe('Axial focus shift');
		expect(fieldValue('lengthMm', 12.3456)).toBe('12.346 mm');
		expect(fieldValue('divergenceMrad', 0.5)).toBe('0.500 mrad');
		expect(fieldValue('anything', { a: 1 })).toBeNull();
		expect(extraLines('x', null)).toEqual([]);
		// Sample lists are drawing data, not figures.
		expect(fieldValue('samplesMm', [1, 2, 3, 4, 5])).toBeNull();
		expect(extraLines('x', { samplesMm: [1, 2, 3, 4, 5], shiftMm: 0.5 }).map((l) => l.key)).toEqual(['x.shiftMm']);
	});
});
