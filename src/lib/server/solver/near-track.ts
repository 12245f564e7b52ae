/**
 * An imaging question with no answer: why, and the nearest answers at other tracks with their
 * figures ("the f = 100 mm part TW-A1-03 works at 401.1 mm"). Single parts: the track that gives
 * exactly the magnification asked follows in closed form from the part's matrix (optics core's
 * `singleAtMagnification`), and the physical limits are applied there. Pairs, for small stocks
 * (at most NEAR_PAIR_MAX_ELEMENTS oriented elements): the search kernel itself, on this thread,
 * with a track tolerance of NEAR_PAIR_WINDOW of the track (its pair tracks are the nearest with a
 * root; see DEVELOPERS.md, track tolerance). Pure: reads the element snapshot the search used.
 */
import { singleAtMagnification, ROOT_STRIDE, ROOT_OBJECT_DISTANCE, ROOT_BACK_DISTANCE, ROOT_MAGNIFICATION, ROOT_FLAGS, ROOT_NON_PHYSICAL } from '../../optics/imaging';
import { checkSinglePhysical } from '../../optics/physical';
import { EL_C, ELEMENT_STRIDE } from '../../optics/snapshot';
import type { ParsedImagingRequest } from '../../solver/request';
import type { NearTrack, SolveResponse } from '../../solver/types';
import type { ElementSnapshot } from './elements';
import { searchShard, searchParamsOf, snapshotArrays, REC_STRIDE, REC_I, REC_J, REC_S, REC_D, REC_M, REC_TRACK } from '../../solver/search/search-kernel';

/** Pairs are looked for only in stocks of at most this many oriented elements (the search runs on the request's thread). */
export const NEAR_PAIR_MAX_ELEMENTS = 400;
/** The window the pair search looks in, as a fraction of the track. */
export const NEAR_PAIR_WINDOW = 0.25;

/** How many near answers an empty answer lists. */
export const NEAR_TRACK_COUNT = 3;

/** A length in mm as people write it: 401.1, 100, 12.5 (one decimal at most, no trailing zero). */
export function mmText(x: number): string {
	const r = Math.round(x * 10) / 10;
	return Object.is(r, -0) ? '0' : String(r);
}

/** "the f = 100 mm part SKU" (EFL at the working wavelength, from the element's matrix). */
function partLabel(eflMm: number, sku: string): string {
	const f = Math.abs(eflMm) >= 10 ? String(Math.round(eflMm)) : mmText(eflMm);
	return `the f = ${f} mm part ${sku}`;
}

/**
 * Single parts of the candidates that image at the magnification asked on another track, nearest
 * first (one line per part: its better orientation), at most `count`.
 */
export function nearSingleTracks(snap: ElementSnapshot, candidates: Int32Array, req: ParsedImagingRequest, count = NEAR_TRACK_COUNT): NearTrack[] {
	const root = new Float64Array(ROOT_STRIDE);
	const best = new Map<number, NearTrack>();
	for (const e of candidates) {
		const track = singleAtMagnification(snap.packed, e, req.magnification, root, 0);
		if (!Number.isFinite(track) || !(track > 0)) continue;
		if ((root[ROOT_FLAGS] & ROOT_NON_PHYSICAL) !== 0) continue;
		const s = root[ROOT_OBJECT_DISTANCE],
			d = root[ROOT_BACK_DISTANCE];
		if (checkSinglePhysical(snap.packed, e, s, d, req.minWorkingDistanceMm) !== 0) continue;
		const pi = snap.partIndex[e];
		const part = snap.parts[pi];
		const c = snap.packed[e * ELEMENT_STRIDE + EL_C];
		const near: NearTrack = {
			skus: [part.sku],
			label: partLabel(-1 / c, part.sku),
			trackMm: track,
			trackOffsetMm: track - req.trackMm,
			objectDistanceMm: s,
			backDistanceMm: d,
			magnification: root[ROOT_MAGNIFICATION]
		};
		const had = best.get(pi);
		if (!had || Math.abs(near.trackOffsetMm) < Math.abs(had.trackOffsetMm)) best.set(pi, near);
	}
	return [...best.values()].sort((a, b) => Math.abs(a.trackOffsetMm) - Math.abs(b.trackOffsetMm)).slice(0, count);
}

/**
 * Pairs of the candidates that image at the magnification asked on another track (within
 * NEAR_PAIR_WINDOW of it), nearest first, one line per pair of parts; empty for large stocks.
 */
export function nearPairTracks(snap: ElementSnapshot, candidates: Int32Array, partUnits: Int32Array, req: ParsedImagingRequest, count = NEAR_TRACK_COUNT): NearTrack[] {
	if (req.maxElements < 2 || candidates.length > NEAR_PAIR_MAX_ELEMENTS) return [];
	const r = searchShard({
		...snapshotArrays(snap),
		partUnits,
		candidates,
		params: { ...searchParamsOf(req), trackToleranceMm: Math.min(NEAR_PAIR_WINDOW * req.trackMm, 1000), maxElements: 2 },
		shardIndex: 0, // (single parts come too; they are left out below: nearSingleTracks lists them)
		shardCount: 1,
		topK: Infinity,
		deadline: Date.now() + 500
	});
	const best = new Map<string, NearTrack>();
	for (let k = 0; k < r.count; k++) {
		const o = k * REC_STRIDE;
		const i = r.records[o + REC_I],
			j = r.records[o + REC_J];
		if (j < 0) continue;
		const pa = snap.parts[snap.partIndex[i]],
			pb = snap.parts[snap.partIndex[j]];
		const f = (e: number) => -1 / snap.packed[e * ELEMENT_STRIDE + EL_C];
		const fText = (e: number) => (Math.abs(f(e)) >= 10 ? String(Math.round(f(e))) : mmText(f(e)));
		const track = r.records[o + REC_TRACK];
		const near: NearTrack = {
			skus: [pa.sku, pb.sku],
			label: `the pair f = ${fText(i)} mm + f = ${fText(j)} mm (${pa.sku} + ${pb.sku})`,
			trackMm: track,
			trackOffsetMm: track - req.trackMm,
			objectDistanceMm: r.records[o + REC_S],
			backDistanceMm: r.records[o + REC_D],
			magnification: r.records[o + REC_M]
		};
		const key = `${pa.sku}+${pb.sku}`;
		const had = best.get(key);
		if (!had || Math.abs(near.trackOffsetMm) < Math.abs(had.trackOffsetMm)) best.set(key, near);
	}
	return [...best.values()].sort((a, b) => Math.abs(a.trackOffsetMm) - Math.abs(b.trackOffsetMm)).slice(0, count);
}

/** The sentence for one near answer: "the f = 100 mm part TW-A1-03 works at 401.1 mm (1.1 mm longer)". */
export function nearTrackText(n: NearTrack): string {
	const off = n.trackOffsetMm;
	const how = Math.abs(off) < 0.05 ? 'within 0.05 mm of the track asked' : `${mmText(Math.abs(off))} mm ${off > 0 ? 'longer' : 'shorter'}`;
	return `${n.label} works at ${mmText(n.trackMm)} mm (${how})`;
}

/** Why an imaging question has no answer, and the nearest answers at other tracks. */
export function imagingNoAnswer(snap: ElementSnapshot, candidates: Int32Array, partUnits: Int32Array, req: ParsedImagingRequest): NonNullable<SolveResponse['noAnswer']> {
	const nearTracks = [...nearSingleTracks(snap, candidates, req), ...nearPairTracks(snap, candidates, partUnits, req)]
		.sort((a, b) => Math.abs(a.trackOffsetMm) - Math.abs(b.trackOffsetMm))
		.slice(0, NEAR_TRACK_COUNT);
	const window = req.trackToleranceMm > 0 ? `${mmText(req.trackMm)} ± ${mmText(req.trackToleranceMm)} mm` : `${mmText(req.trackMm)} mm`;
	const reason = `No part or pair images at m = ${req.magnification} over a track of ${window} within the limits asked.`;
	if (nearTracks.length === 0) return { reason, hint: null, nearTracks };
	const first = nearTracks[0];
	const need = Math.abs(first.trackOffsetMm);
	const hint =
		`Nearest: ${nearTracks.map(nearTrackText).join('; ')}.` +
		(need > req.trackToleranceMm ? ` A track tolerance of ${mmText(Math.ceil(need * 10) / 10)} mm would admit the first.` : '');
	return { reason, hint, nearTracks };
}
