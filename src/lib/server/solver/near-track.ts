/**
 * An imaging question with no answer: why, and the nearest answers at other tracks with their
 * figures ("the f = 100 mm part TW-A1-03 works at 401.1 mm"). Single parts only: for each the
 * track that gives exactly the magnification asked follows in closed form from its matrix
 * (optics core's `singleAtMagnification`), and the physical limits are applied there.
 * Pure: reads the element snapshot the search used.
 */
import { singleAtMagnification, ROOT_STRIDE, ROOT_OBJECT_DISTANCE, ROOT_BACK_DISTANCE, ROOT_MAGNIFICATION, ROOT_FLAGS, ROOT_NON_PHYSICAL } from '../../optics/imaging';
import { checkSinglePhysical } from '../../optics/physical';
import { EL_C, ELEMENT_STRIDE } from '../../optics/snapshot';
import type { ParsedImagingRequest } from '../../solver/request';
import type { NearTrack, SolveResponse } from '../../solver/types';
import type { ElementSnapshot } from './elements';

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

/** The sentence for one near answer: "the f = 100 mm part TW-A1-03 works at 401.1 mm (1.1 mm longer)". */
export function nearTrackText(n: NearTrack): string {
	const off = n.trackOffsetMm;
	const how = Math.abs(off) < 0.05 ? 'within 0.05 mm of the track asked' : `${mmText(Math.abs(off))} mm ${off > 0 ? 'longer' : 'shorter'}`;
	return `${n.label} works at ${mmText(n.trackMm)} mm (${how})`;
}

/** Why an imaging question has no answer, and the nearest answers at other tracks. */
export function imagingNoAnswer(snap: ElementSnapshot, candidates: Int32Array, req: ParsedImagingRequest): NonNullable<SolveResponse['noAnswer']> {
	const nearTracks = nearSingleTracks(snap, candidates, req);
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
