/**
 * How Build from stock orders its answers, shared by the solver (which sorts by it) and the
 * /build page (which explains it and says, row by row, what put an answer below the one above).
 * Pure: imported by the server through a relative path, like the types.
 */
import type { Solution } from './types';

/** Spot ratios (RMS over Airy radius) above 1 are grouped in bands this many times wider each. */
export const SPOT_BAND_FACTOR = 1.25;
/** The shorter working distance counts in whole steps of this, mm. */
export const WORKING_DISTANCE_STEP_MM = 10;
/**
 * Losses of the requested cone up to this fraction count as none: about the resolution of the
 * field-edge ray grid, and below a brightness change one notices (a rule of this product).
 */
export const VIGNETTING_TOLERANCE = 0.02;
/**
 * The field edge counts as blocked when it passes less than this fraction of the light the axis
 * passes (relative illumination below 50 %; a rule of this product, common practice, no source).
 */
export const EDGE_BLOCKED_RATIO = 0.5;
/**
 * A spot counts as near the diffraction limit when its RMS radius is at most this many Airy
 * radii (max of axis and field edge). 2 is our own line for "good enough to image", not a
 * standard (common practice, no source: the Maréchal-type criteria are much stricter).
 */
export const NEAR_DIFFRACTION_RATIO = 2;

/** Which figures rank the answers: at the working wavelength, or over the colour band. */
export type RankBy = 'monochromatic' | 'band';

/**
 * The spot band of a ratio to Airy: 0 for ratio ≤ 1 (diffraction-limited answers all tie),
 * then 1 for (1, 1.25], 2 for (1.25, 1.5625], … ; untraced answers come after every traced one.
 */
export function spotBand(ratioToAiry: number | null): number {
	const r = ratioToAiry;
	return r === null ? 1e6 : r <= 1 ? 0 : Math.ceil(Math.log(r) / Math.log(SPOT_BAND_FACTOR));
}

/** Upper edge of a spot band, as a ratio to the Airy radius (band 0: 1). */
export function spotBandLimit(band: number): number {
	return Math.pow(SPOT_BAND_FACTOR, band);
}

/** The shorter of the two working distances (object side, target side), mm. */
export function shorterWorkingDistanceMm(s: Pick<Solution, 'objectDistanceMm' | 'backDistanceMm'>): number {
	return Math.min(s.objectDistanceMm, s.backDistanceMm);
}

/** True when the answer's field edge is blocked (see EDGE_BLOCKED_RATIO). Answers saved before it was recorded: false. */
export function edgeBlocked(s: Pick<Solution, 'vignetting'>): boolean {
	return s.vignetting.edgeBlocked === true;
}

/**
 * Vignetting class of an answer (lower is better): 0 the whole requested cone passes on axis and
 * at the field edge (losses within VIGNETTING_TOLERANCE); 1 the field edge loses part of its cone;
 * 2 the axis loses part of the cone (the setup does not deliver the NA asked for); 3 the field
 * edge is blocked (it is not imaged: never above an answer that images the whole field).
 */
export function vignettingClass(s: Pick<Solution, 'vignetting'>): number {
	return edgeBlocked(s) ? 3 : s.vignetting.axial ? 2 : s.vignetting.edge ? 1 : 0;
}

/** The ratio to Airy an answer is ranked by: the monochromatic one, or the band's (null: not traced). */
export function rankedRatio(s: Pick<Solution, 'spot' | 'colour'>, by: RankBy = 'monochromatic'): number | null {
	return by === 'band' ? (s.colour?.ratioToAiry ?? null) : s.spot.ratioToAiry;
}

/**
 * The spot band to show for an answer: null when its field edge is blocked (no band is shown:
 * a blocked field is never "within the Airy radius", whatever its axis does).
 */
export function shownSpotBand(s: Pick<Solution, 'spot' | 'colour' | 'vignetting'>, by: RankBy = 'monochromatic'): number | null {
	return edgeBlocked(s) ? null : spotBand(rankedRatio(s, by));
}

/**
 * Ranking key (lower is better), compared in order: the vignetting class (`vignettingClass`: an
 * answer that clips the field edge does not image the whole object and one that clips the axis
 * does not deliver the NA asked for, so neither ranks above an answer that does what was asked;
 * a blocked field edge comes last); then coating (an answer that uses a part outside its coating band comes after
 * every in-band one of the same vignetting class: it images as asked but loses light and adds stray light at that
 * part's surfaces); then spot over Airy (monochromatic or over the band, `by`) in
 * steps of 25 % (all diffraction-limited answers, ratio ≤ 1, tie), untraced after traced; the
 * smaller working distance in steps of 10 mm (longer first); part count; then the exact ratio.
 */
export function rankKey(s: Omit<Solution, 'rank'>, by: RankBy = 'monochromatic'): number[] {
	const r = rankedRatio(s, by);
	const bucket = spotBand(r);
	const wd = -Math.floor(shorterWorkingDistanceMm(s) / WORKING_DISTANCE_STEP_MM);
	return [vignettingClass(s), coatingClass(s), bucket, wd, s.elements.length, r ?? 1e9];
}

/** 1 when an answer uses a part outside its coating band (any mode), else 0. */
export function coatingClass(s: { warnings?: readonly { code: string }[] }): number {
	return s.warnings?.some((w) => w.code === 'coating-out-of-band') ? 1 : 0;
}

/** Compares two ranking keys. */
export function compareKeys(a: number[], b: number[]): number {
	for (let k = 0; k < a.length; k++) if (a[k] !== b[k]) return a[k] - b[k];
	return 0;
}

/** Which part of the ranking key put an answer below the one ranked just above it. */
export type RankStep = 'vignetting' | 'coating' | 'spot band' | 'working distance' | 'part count' | 'exact spot' | 'tie';

/** The first criterion in which `below` loses to `above` (by `rankKey`). */
export function decidingStep(above: Omit<Solution, 'rank'>, below: Omit<Solution, 'rank'>, by: RankBy = 'monochromatic'): RankStep {
	const a = rankKey(above, by),
		b = rankKey(below, by);
	const steps: RankStep[] = ['vignetting', 'coating', 'spot band', 'working distance', 'part count', 'exact spot'];
	for (let k = 0; k < steps.length; k++) if (a[k] !== b[k]) return steps[k];
	return 'tie';
}

/** Spot bands the packed key tells apart (band 0 … RANK_BANDS − 2; untraced answers and higher bands share the last). */
const RANK_BANDS = 128;
/** Working-distance steps the packed key tells apart (0 … 32 767 steps of 10 mm: 327 m). */
const RANK_WD_STEPS = 32768;

/**
 * A ranking key (`rankKey`'s six numbers) as one number that orders as `compareKeys` does,
 * except that keys differing only in the exact ratio may tie or order within about 1e-7 of
 * it: the integer part holds vignetting class, coating, spot band, working-distance step and
 * part count; the fraction, r/(1 + r), the exact ratio. Monotone in each component, so a
 * key that is componentwise-lexicographically at most another packs to at most the other's
 * number: the solver's search compares lower bounds of keys with the N-th answer's key in it.
 */
export function packRankKey(k: readonly number[]): number {
	return packRankParts(k[0], k[1], k[2], k[3], k[4], k[5]);
}

/** `packRankKey` of the six components given one by one (the search's hot path: no array). */
export function packRankParts(vignetting: number, coating: number, band: number, wdStep: number, parts: number, ratio: number): number {
	const b = Math.min(RANK_BANDS - 1, Math.max(0, band));
	const wd = Math.min(RANK_WD_STEPS - 1, Math.max(0, wdStep + RANK_WD_STEPS / 2));
	const r = Math.max(0, ratio);
	return (((vignetting * 2 + coating) * RANK_BANDS + b) * RANK_WD_STEPS + wd) * 4 + parts + r / (1 + r);
}
