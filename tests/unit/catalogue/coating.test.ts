/**
 * The coating band read from coating text (`$lib/coating`), as the part form, the API and the CSV
 * import keep it. The rules are ours (stated in the module): a range with its unit, or one line ±2 %.
 */
import { describe, expect, it } from 'vitest';
import { coversWavelength, outOfBandWords, parseCoatingBand } from '../../../src/lib/coating';
import { partInputSchema } from '../../../src/lib/server/catalogue/part-input';
import { columnsOf } from '../../../src/lib/server/catalogue/parts';

describe('coating band from text', () => {
	it.each([
		['AR 400–700 nm', 400, 700, 'range'],
		['AR 400-700nm', 400, 700, 'range'],
		['AR 400 nm – 700 nm', 400, 700, 'range'],
		['BBAR 1050—1700 nm (fibre bench)', 1050, 1700, 'range'],
		['AR 1.05–1.7 µm', 1050, 1700, 'range'],
		['AR 1.05-1.7um', 1050, 1700, 'range'],
		['AR 430 to 670 nm', 430, 670, 'range'],
		['AR 700–400 nm', 400, 700, 'range'],
		['V-coat 1064 nm', 1042.72, 1085.28, 'line'],
		['V-coat @ 532nm', 521.36, 542.64, 'line'],
		['AR 400–700 nm, V 1064 nm', 400, 700, 'range']
	] as const)('%s → %s–%s nm (%s)', (text, lo, hi, kind) => {
		const r = parseCoatingBand(text);
		expect(r.ok).toBe(true);
		if (!r.ok || !r.band) throw new Error('no band');
		expect(r.band.minNm).toBeCloseTo(lo, 6);
		expect(r.band.maxNm).toBeCloseTo(hi, 6);
		expect(r.band.kind).toBe(kind);
	});

	it.each(['uncoated', 'MgF2 single layer', '', null, 'AR (see datasheet)'])('%s → no band', (text) => {
		expect(parseCoatingBand(text)).toEqual({ ok: true, band: null });
	});

	it('refuses a band that is no wavelength, and a range with equal ends', () => {
		expect(parseCoatingBand('AR 5–10 nm').ok).toBe(false);
		expect(parseCoatingBand('AR 25–30 µm').ok).toBe(false);
		expect(parseCoatingBand('AR 700–700 nm').ok).toBe(false);
	});

	it('a wavelength inside (ends included) or outside; no band is never outside', () => {
		const band = { minNm: 1050, maxNm: 1700 };
		expect(coversWavelength(band, 1050)).toBe(true);
		expect(coversWavelength(band, 1700)).toBe(true);
		expect(coversWavelength(band, 587.6)).toBe(false);
		expect(coversWavelength(null, 587.6)).toBe(true);
		expect(outOfBandWords('TW-1', 'AR 1050–1700 nm', band, 587.6)).toMatch(/coating band 1050–1700 nm/);
	});

	it('the part schema names the coating field for an unreadable band; columnsOf stores the band', () => {
		const base = { sku: 'CT-1', name: 'Coating test', kind: 'other', diameterMm: 25.4, eflMm: 100 };
		const bad = partInputSchema.safeParse({ ...base, coating: 'AR 5–10 nm' });
		expect(bad.success).toBe(false);
		expect(bad.error!.issues.map((i) => i.path.join('.'))).toContain('coating');
		const good = partInputSchema.parse({ ...base, coating: 'V-coat 1064 nm' });
		const cols = columnsOf(good, null);
		expect([cols.coatingMinNm, cols.coatingMaxNm]).toEqual([1042.72, 1085.28]);
		const none = columnsOf(partInputSchema.parse({ ...base, coating: 'uncoated' }), null);
		expect([none.coatingMinNm, none.coatingMaxNm]).toEqual([null, null]);
	});
});
