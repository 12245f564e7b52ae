/**
 * The band of the colour figures: F–d–C in the visible (common practice, no source: the band of the Abbe number),
 * elsewhere the parts' common coating band when it holds the working wavelength, else F–d–C scaled to it (our rule).
 */
import { describe, expect, it } from 'vitest';
import { FDC_BAND_NM, colourBandFor, defaultColourBand } from '../../../src/lib/optics/colour';

describe('colour band of an answer', () => {
	it('is F–d–C in the visible, whatever the coatings', () => {
		expect(colourBandFor(587.6, [{ minNm: 400, maxNm: 700 }])).toBe(FDC_BAND_NM);
		expect(colourBandFor(632.8, [])).toBe(FDC_BAND_NM);
	});
	it('outside the visible: the range every part is coated for, when it holds the wavelength', () => {
		expect(colourBandFor(1064, [{ minNm: 1000, maxNm: 1100 }, { minNm: 1050, maxNm: 1700 }])).toEqual([1050, 1064, 1100]);
	});
	it('falls back to the scaled F–d–C band without a common coating range around the wavelength', () => {
		const scaled = defaultColourBand(1064);
		expect(scaled[1]).toBe(1064);
		expect(colourBandFor(1064, [{ minNm: 1000, maxNm: 1100 }, null])).toEqual(scaled);
		expect(colourBandFor(1064, [{ minNm: 1260, maxNm: 1620 }])).toEqual(scaled);
		expect(colourBandFor(1064, [{ minNm: 1063, maxNm: 1065 }])).toEqual(scaled); // narrower than 1 % of λ
	});
});
