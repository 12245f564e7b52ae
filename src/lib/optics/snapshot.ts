/**
 * The struct-of-arrays snapshot the solver's hot loop reads: every oriented element as
 * ELEMENT_STRIDE numbers in one Float64Array, so the pair kernel touches no objects.
 *
 * Layout of element k (offset k·ELEMENT_STRIDE):
 *   [A, B, C, D]      vertex-to-vertex matrix at the working wavelength
 *   thickness         first to last vertex, mm
 *   frontCurvature    1/R of the first surface, 1/mm (0 = flat; black boxes: 0)
 *   backCurvature     1/R of the last surface, 1/mm
 *   semiAperture      half the clear aperture, mm (0 when unknown: only vertices are checked)
 *   frontSag, backSag sag of the first / last surface at semiAperture, mm
 *   edgeSemiDiameter  half the outer (glass) diameter, mm: where the glass ends (the
 *                     clear semi-aperture when the outer diameter is unknown; never
 *                     beyond the outer spheres: a hemisphere's rim at most)
 *   edgeFrontSag, edgeBackSag  sag of the first / last surface at edgeSemiDiameter, mm
 */
import { InvalidArgumentError } from './errors';
import type { ThickElement } from './element';
import { sagMm } from './sag';

/** Numbers per element in a snapshot. */
export const ELEMENT_STRIDE = 13;
/** Offset of matrix entry A. */
export const EL_A = 0;
/** Offset of matrix entry B (mm). */
export const EL_B = 1;
/** Offset of matrix entry C (1/mm). */
export const EL_C = 2;
/** Offset of matrix entry D. */
export const EL_D = 3;
/** Offset of the vertex-to-vertex thickness (mm). */
export const EL_THICKNESS = 4;
/** Offset of the first surface's curvature (1/mm). */
export const EL_FRONT_CURVATURE = 5;
/** Offset of the last surface's curvature (1/mm). */
export const EL_BACK_CURVATURE = 6;
/** Offset of the clear semi-aperture (mm). */
export const EL_SEMI_APERTURE = 7;
/** Offset of the first surface's sag at the semi-aperture (mm). */
export const EL_FRONT_SAG = 8;
/** Offset of the last surface's sag at the semi-aperture (mm). */
export const EL_BACK_SAG = 9;
/** Offset of half the outer (glass) diameter (mm). */
export const EL_EDGE_SEMI_DIAMETER = 10;
/** Offset of the first surface's sag at the glass edge (mm). */
export const EL_EDGE_FRONT_SAG = 11;
/** Offset of the last surface's sag at the glass edge (mm). */
export const EL_EDGE_BACK_SAG = 12;

/**
 * Half the outer diameter at which the element's glass ends, mm: the outer diameter's half
 * when known, else the clear semi-aperture; never less than the clear semi-aperture and never
 * beyond the outer surfaces' spheres (a sphere reaches at most |R|; the catalogue refuses parts
 * whose diameter does not fit, but a measured EFL may shrink the radii).
 */
export function edgeSemiDiameterMm(element: ThickElement): number {
	const clear = element.clearApertureMm === null ? 0 : element.clearApertureMm / 2;
	const outer = element.outerDiameterMm == null ? clear : element.outerDiameterMm / 2;
	let h = outer > clear ? outer : clear;
	const s = element.surfaces;
	if (s !== null) {
		for (const surface of [s[0], s[s.length - 1]]) {
			if (surface.radiusMm !== null && Math.abs(surface.radiusMm) < h) h = Math.max(clear, Math.abs(surface.radiusMm));
		}
	}
	return h;
}

/**
 * Writes `element` as entry `index` of `snapshot`. Throws InvalidArgumentError when the
 * clear aperture does not fit on a surface (`buildElement` already refuses such parts).
 */
export function packElement(snapshot: Float64Array, index: number, element: ThickElement): void {
	const o = index * ELEMENT_STRIDE;
	const m = element.matrix;
	const s = element.surfaces;
	const cFront = s === null || s[0].radiusMm === null ? 0 : 1 / s[0].radiusMm;
	const last = s === null ? null : s[s.length - 1];
	const cBack = last === null || last.radiusMm === null ? 0 : 1 / last.radiusMm;
	const h = element.clearApertureMm === null ? 0 : element.clearApertureMm / 2;
	const sagFront = sagMm(cFront, h);
	const sagBack = sagMm(cBack, h);
	if (sagFront === null || sagBack === null) {
		throw new InvalidArgumentError('The clear aperture does not fit on the outer surfaces of this element.');
	}
	snapshot[o + EL_A] = m[0];
	snapshot[o + EL_B] = m[1];
	snapshot[o + EL_C] = m[2];
	snapshot[o + EL_D] = m[3];
	snapshot[o + EL_THICKNESS] = element.thicknessMm;
	snapshot[o + EL_FRONT_CURVATURE] = cFront;
	snapshot[o + EL_BACK_CURVATURE] = cBack;
	snapshot[o + EL_SEMI_APERTURE] = h;
	snapshot[o + EL_FRONT_SAG] = sagFront;
	snapshot[o + EL_BACK_SAG] = sagBack;
	const edge = edgeSemiDiameterMm(element);
	snapshot[o + EL_EDGE_SEMI_DIAMETER] = edge;
	// A hemisphere's rim (h = |R| up to rounding): the sag is R itself.
	snapshot[o + EL_EDGE_FRONT_SAG] = sagMm(cFront, edge) ?? 1 / cFront;
	snapshot[o + EL_EDGE_BACK_SAG] = sagMm(cBack, edge) ?? 1 / cBack;
}

/** A new snapshot holding `elements` in order (entry k = elements[k]). */
export function packElements(elements: readonly ThickElement[]): Float64Array {
	const snapshot = new Float64Array(elements.length * ELEMENT_STRIDE);
	elements.forEach((e, k) => packElement(snapshot, k, e));
	return snapshot;
}
