/**
 * A part's coating band as numbers, read from the coating text a datasheet or a person writes:
 * "AR 400–700 nm", "AR 400-700nm", "BBAR 1.05–1.7 µm", "V-coat 1064 nm", "AR 430 to 670 nm".
 * Shared by the part service (form, API, CSV import all go through it), the seed and the pages.
 *
 * Rules (ours, stated on the part page and in DEVELOPERS.md):
 * - A range "a–b" (en dash, hyphen, em dash, "to" or "..") with a unit after it (nm, µm/um) is the band
 *   [a, b]; a unit may also follow the first number ("400 nm – 700 nm"). The ends may come in any order.
 * - A single wavelength ("V-coat 1064 nm", "AR @ 532 nm") is a line coating: the band is that wavelength
 *   ±`LINE_COATING_HALF_WIDTH` (2 %) of it, so 1064 nm gives 1042.7–1085.3 nm. A V-coat keeps its low
 *   reflectance only within a few per cent of its design line (from memory; no source): 2 % is our own
 *   round figure, stated wherever the band is shown.
 * - Only the first band of the text counts; text without a wavelength ("uncoated", "MgF₂") has no band,
 *   and then the solver neither warns nor leaves the part out.
 * - A band outside 100–20000 nm is refused: the text names something that is not a wavelength.
 */

/** Half width of the band of a single-wavelength (line, V-) coating, as a fraction of its wavelength. */
export const LINE_COATING_HALF_WIDTH = 0.02;
/** Plausible wavelengths of a coating band, nm. */
export const COATING_LIMITS_NM: readonly [number, number] = [100, 20_000];

export interface CoatingBand {
	minNm: number;
	maxNm: number;
	/** 'range': both ends written; 'line': one wavelength ± LINE_COATING_HALF_WIDTH. */
	kind: 'range' | 'line';
}

export type CoatingParse = { ok: true; band: CoatingBand | null } | { ok: false; message: string };

const NUM = String.raw`(\d+(?:[.,]\d+)?)`;
const UNIT = String.raw`(nm|µm|μm|um|micron(?:s)?)`;
const RANGE = new RegExp(String.raw`${NUM}\s*${UNIT}?\s*(?:–|—|-|‒|to|\.\.)\s*${NUM}\s*${UNIT}(?![a-z])`, 'i');
const SINGLE = new RegExp(String.raw`${NUM}\s*${UNIT}(?![a-z])`, 'i');

const toNm = (value: string, unit: string): number => {
	const x = Number(value.replace(',', '.'));
	return /nm/i.test(unit) ? x : x * 1000;
};
/** Rounds away floating noise of the unit conversion (0.1 pm). */
const clean = (x: number) => Math.round(x * 1e4) / 1e4;

/** Reads the coating band from a coating text (see the module comment); null text → no band. */
export function parseCoatingBand(text: string | null | undefined): CoatingParse {
	if (!text) return { ok: true, band: null };
	let band: CoatingBand | null = null;
	const r = RANGE.exec(text);
	const s = SINGLE.exec(text);
	if (r && (!s || r.index <= s.index)) {
		const unit = r[4];
		const a = toNm(r[1], r[2] ?? unit);
		const b = toNm(r[3], unit);
		band = { minNm: clean(Math.min(a, b)), maxNm: clean(Math.max(a, b)), kind: 'range' };
	} else if (s) {
		const w = toNm(s[1], s[2]);
		band = { minNm: clean(w * (1 - LINE_COATING_HALF_WIDTH)), maxNm: clean(w * (1 + LINE_COATING_HALF_WIDTH)), kind: 'line' };
	}
	if (!band) return { ok: true, band: null };
	const [lo, hi] = COATING_LIMITS_NM;
	if (!(band.minNm >= lo && band.maxNm <= hi)) {
		return { ok: false, message: `The coating band ${bandWords(band)} lies outside ${lo}–${hi} nm: write it as e.g. "AR 400–700 nm".` };
	}
	if (band.kind === 'range' && band.minNm === band.maxNm) {
		return { ok: false, message: 'The coating band has both ends at the same wavelength: write one wavelength, e.g. "V-coat 1064 nm", or a range.' };
	}
	return { ok: true, band };
}

/** The band from stored columns (null when either is missing). */
export function bandOf(minNm: number | null | undefined, maxNm: number | null | undefined): { minNm: number; maxNm: number } | null {
	return minNm == null || maxNm == null ? null : { minNm, maxNm };
}

const fmt = (x: number) => String(Math.round(x * 10) / 10);

/** "430–670 nm". */
export function bandWords(band: { minNm: number; maxNm: number }): string {
	return `${fmt(band.minNm)}–${fmt(band.maxNm)} nm`;
}

/** True when the wavelength lies inside the band (ends included); a part without a band is never outside. */
export function coversWavelength(band: { minNm: number; maxNm: number } | null, wavelengthNm: number): boolean {
	return band === null || (wavelengthNm >= band.minNm && wavelengthNm <= band.maxNm);
}

/** The warning of an answer that uses a part outside its coating band. */
export function outOfBandWords(sku: string, coating: string | null, band: { minNm: number; maxNm: number }, wavelengthNm: number): string {
	const named = coating ? ` ("${coating}")` : '';
	return (
		`${sku} is used at ${fmt(wavelengthNm)} nm, outside its coating band ${bandWords(band)}${named}: ` +
		'expect more reflection loss and stray light from its surfaces than its datasheet states.'
	);
}
