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

/**
 * Ranking key (lower is better), compared in order: vignetting first (none, then field edge, then
 * on axis: an answer that clips the marginal ray does not deliver the NA asked for, and one that
 * clips the field edge does not image the whole object, so neither may rank above an answer that
 * does what was asked); then coating (an answer that uses a part outside its coating band comes
 * after every in-band one of the same vignetting class: it images as asked but loses light and
 * adds stray light at that part's surfaces); then spot over Airy in steps of 25 % (all diffraction-limited answers,
 * ratio ≤ 1, tie), untraced after traced; the smaller working distance in steps of 10 mm (longer
 * first); part count; then the exact spot ratio.
 */
export function rankKey(s: Omit<Solution, 'rank'>): number[] {
	const r = s.spot.ratioToAiry;
	const bucket = spotBand(r);
	const vig = s.vignetting.axial ? 2 : s.vignetting.edge ? 1 : 0;
	const wd = -Math.floor(shorterWorkingDistanceMm(s) / WORKING_DISTANCE_STEP_MM);
	return [vig, coatingClass(s), bucket, wd, s.elements.length, r ?? 1e9];
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
export function decidingStep(above: Omit<Solution, 'rank'>, below: Omit<Solution, 'rank'>): RankStep {
	const a = rankKey(above),
		b = rankKey(below);
	const steps: RankStep[] = ['vignetting', 'coating', 'spot band', 'working distance', 'part count', 'exact spot'];
	for (let k = 0; k < steps.length; k++) if (a[k] !== b[k]) return steps[k];
	return 'tie';
}
