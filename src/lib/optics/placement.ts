/**
 * Object-shaped access to the imaging kernels, for part pages, tests and the solver's
 * output stage (not for the hot loop: these allocate). A placement says where the parts
 * stand; `placementLayout` turns it into a `Layout` for matrices, traces and drawings.
 */
import type { ThickElement } from './element';
import type { Layout } from './system';
import { packElements } from './snapshot';
import {
	ROOT_STRIDE,
	ROOT_OBJECT_DISTANCE,
	ROOT_GAP,
	ROOT_BACK_DISTANCE,
	ROOT_MAGNIFICATION,
	ROOT_FLAGS,
	ROOT_RESIDUAL,
	ROOT_DOUBLE,
	ROOT_FAMILY,
	ROOT_VIRTUAL_OBJECT,
	ROOT_NEGATIVE_GAP,
	ROOT_NEGATIVE_BACK,
	ROOT_UNVERIFIED
} from './roots';
import { solveSingleKernel } from './imaging';
import { solvePairKernel } from './pair-kernel';

/** One configuration that images the object plane onto the target plane. */
export interface Placement {
	/** Object plane to the first vertex, mm. */
	readonly objectDistanceMm: number;
	/** Vertex gap between the two parts, mm (null for a single part). */
	readonly gapMm: number | null;
	/** Last vertex to the target plane, mm. */
	readonly backDistanceMm: number;
	/** Signed magnification from the full matrix (negative: inverted). */
	readonly magnification: number;
	/** Two roots merged into this one (see ROOT_DOUBLE). */
	readonly double: boolean;
	/** Representative (s = d) of an afocal one-parameter family (see ROOT_FAMILY). */
	readonly family: boolean;
	/** s < 0. */
	readonly virtualObject: boolean;
	/** g < 0: the parts would overlap. */
	readonly negativeGap: boolean;
	/** d < 0: virtual image. */
	readonly negativeBack: boolean;
	/** The full-matrix check passed. */
	readonly verified: boolean;
	/** |B| of the object-to-target matrix, mm. */
	readonly residualMm: number;
}

/** Placements found, or why there are none. */
export type PlacementResult =
	| { readonly ok: true; readonly placements: readonly Placement[] }
	| { readonly ok: false; readonly reason: 'no-real-root' | 'invalid-input'; readonly message: string };

function decode(out: Float64Array, count: number, pair: boolean): Placement[] {
	const list: Placement[] = [];
	for (let k = 0; k < count; k++) {
		const o = k * ROOT_STRIDE;
		const f = out[o + ROOT_FLAGS];
		list.push({
			objectDistanceMm: out[o + ROOT_OBJECT_DISTANCE],
			gapMm: pair ? out[o + ROOT_GAP] : null,
			backDistanceMm: out[o + ROOT_BACK_DISTANCE],
			magnification: out[o + ROOT_MAGNIFICATION],
			double: (f & ROOT_DOUBLE) !== 0,
			family: (f & ROOT_FAMILY) !== 0,
			virtualObject: (f & ROOT_VIRTUAL_OBJECT) !== 0,
			negativeGap: (f & ROOT_NEGATIVE_GAP) !== 0,
			negativeBack: (f & ROOT_NEGATIVE_BACK) !== 0,
			verified: (f & ROOT_UNVERIFIED) === 0,
			residualMm: out[o + ROOT_RESIDUAL]
		});
	}
	return list;
}

/**
 * Where `element` can stand to image the object plane onto a target plane `trackMm`
 * away (up to two placements, magnifications from the optics). Non-physical placements
 * are returned flagged, not dropped.
 */
export function placeSingle(element: ThickElement, trackMm: number): PlacementResult {
	if (!Number.isFinite(trackMm)) {
		return { ok: false, reason: 'invalid-input', message: 'The track length must be a number of mm.' };
	}
	const out = new Float64Array(2 * ROOT_STRIDE);
	const n = solveSingleKernel(packElements([element]), 0, trackMm, out, 0);
	if (n === 0) return { ok: false, reason: 'no-real-root', message: 'No position of this part images over this track.' };
	return { ok: true, placements: decode(out, n, false) };
}

/**
 * Every placement of `first` then `second` that images the object plane onto a target
 * plane `trackMm` away with exactly `magnification` (signed, ≠ 0). Non-physical
 * placements are returned flagged; apply `checkPairPhysical` for the limits.
 */
export function placePair(
	first: ThickElement,
	second: ThickElement,
	trackMm: number,
	magnification: number
): PlacementResult {
	if (!Number.isFinite(trackMm) || !Number.isFinite(magnification) || magnification === 0) {
		return {
			ok: false,
			reason: 'invalid-input',
			message: 'The track must be a number of mm and the magnification a non-zero number.'
		};
	}
	const out = new Float64Array(2 * ROOT_STRIDE);
	const n = solvePairKernel(packElements([first, second]), 0, 1, trackMm, magnification, out, 0);
	if (n === 0) {
		return { ok: false, reason: 'no-real-root', message: 'No gap of this pair images at this magnification over this track.' };
	}
	return { ok: true, placements: decode(out, n, true) };
}

/** The layout of `elements` (one or two) placed as `placement` says. */
export function placementLayout(elements: readonly ThickElement[], placement: Placement): Layout {
	return {
		objectDistanceMm: placement.objectDistanceMm,
		elements,
		gapsMm: placement.gapMm === null ? [] : [placement.gapMm],
		backDistanceMm: placement.backDistanceMm
	};
}
