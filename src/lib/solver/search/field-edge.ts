/**
 * The field edge of a placement as the solver ranks it: its real chief ray through the aperture
 * stop, the passed part of its cone, that part's spot and the share of the cone lost; and the
 * axial fan's ray count. Shared by the evaluation (real-ray-figures.ts) and the search's rank
 * bound (rank-bound.ts), which must trace the same rays. Pure: optics core only.
 */
import { stopChiefSine } from '../../optics/spot';
import { fieldGridSpot, edgePupil, pupilSpot, PUPIL_SEARCH_GRID, type PupilEllipse } from '../../optics/field-spot';
import type { TraceSystem } from '../../optics/raytrace';

/** Rays (rings) of the axial spot of the final trace. */
export const FAN_RAYS = 32;
/** Rings and spokes (over the half plane, mirrored) of the field edge's sample of its passed cone: 60 rays standing for 120 (12 equal angles round the full circle integrate the squared terms of coma and astigmatism exactly). */
export const EDGE_RINGS = 10;
export const EDGE_SPOKES = 6;
/** Cells across the square grid used when the field edge's passed rays do not surround a passing centre. */
export const EDGE_GRID = PUPIL_SEARCH_GRID;

/** The field edge traced: its spot, the fraction of the requested cone lost, and how it was sampled. */
export interface EdgeTrace {
	rmsMm: number | null;
	/** Centroid height of the edge spot, mm (NaN when no ray arrives). */
	centroidMm: number;
	lostFraction: number;
	sinChief: number;
	/** The passed part of the cone, sampled by `pupilSpot` (null: nothing passes, or the fallback grid was used). */
	pupil: PupilEllipse | null;
	/**
	 * False when `stopAboveMm` cut the spot short (see `pupilSpot`): `rmsMm` is then a lower
	 * bound above it, and the lost fraction is not known (NaN).
	 */
	complete: boolean;
}

/**
 * The field edge around its real chief ray (through the centre of the aperture stop): the passed
 * part of the requested cone (`edgePupil`) sampled by `pupilSpot`; when the passed rays do not
 * surround a passing centre, a square grid over the whole requested cone (`fieldGridSpot`);
 * when nothing passes, the field edge is blocked (all of its cone lost, no spot: when
 * `edgePupil`'s search already traced that grid and found nothing, it is not traced again). With
 * `stopAboveMm` (the rank bound), the pupil's spot stops as soon as it is surely larger.
 */
export function edgeTrace(sys: TraceSystem, h: number, na: number, stopSurface: number, stopAboveMm?: number): EdgeTrace {
	const sinChief = stopChiefSine(sys, h, stopSurface);
	const pupil = edgePupil(sys, h, sinChief, na);
	if (pupil === 'blocked') return { rmsMm: null, centroidMm: NaN, lostFraction: 1, sinChief, pupil: null, complete: true };
	if (pupil) {
		const spot = pupilSpot(sys, h, pupil, { rings: EDGE_RINGS, spokes: EDGE_SPOKES, stopAboveMm });
		if (!spot.complete) return { rmsMm: spot.rmsAboutCentroidMm, centroidMm: spot.centroidMm, lostFraction: NaN, sinChief, pupil, complete: false };
		// Rounding in the share of a cone that passes whole (ellipse = the cone) is not a loss.
		const lost = 1 - spot.passedShare;
		if (spot.raysTraced > 0) return { rmsMm: spot.rmsAboutCentroidMm, centroidMm: spot.centroidMm, lostFraction: lost < 1e-12 ? 0 : lost, sinChief, pupil, complete: true };
	}
	const grid = fieldGridSpot(sys, h, { sinChief, radiusSine: na, grid: EDGE_GRID });
	return { rmsMm: grid.raysTraced > 0 ? grid.rmsAboutCentroidMm : null, centroidMm: grid.centroidMm, lostFraction: 1 - grid.passedFraction, sinChief, pupil: null, complete: true };
}

/** The field edge's spot at another wavelength, sampled as `edgeTrace` sampled it. */
export function edgeSpotAt(sys: TraceSystem, h: number, na: number, e: EdgeTrace): { rmsAboutCentroidMm: number; centroidMm: number } | null {
	if (e.pupil) {
		const spot = pupilSpot(sys, h, e.pupil, { rings: EDGE_RINGS, spokes: EDGE_SPOKES });
		return spot.raysTraced > 0 ? spot : null;
	}
	const grid = fieldGridSpot(sys, h, { sinChief: e.sinChief, radiusSine: na, grid: EDGE_GRID });
	return grid.raysTraced > 0 ? grid : null;
}

