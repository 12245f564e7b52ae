/**
 * Systems: elements and gaps composed into one plane-to-plane matrix, the imaging
 * condition (B = 0), magnification (A), and the layout the solver and the drawings use
 * (object plane, elements with their gaps, image plane).
 */
import { type Mat2, type ReadonlyMat2, identity, multiply, translation, create } from './matrix';
import { type CardinalPoints, cardinalPoints } from './cardinal';
import type { ThickElement } from './element';

/** One step of a system, in the order light meets it. */
export type SystemStep =
	| { readonly kind: 'gap'; readonly lengthMm: number; readonly index?: number }
	| { readonly kind: 'element'; readonly element: ThickElement };

/**
 * The plane-to-plane matrix of `steps` (first step met first), written into `out`:
 * M = Sₖ ··· S₂ · S₁, the product right to left in the order light meets the steps.
 */
export function composeSystem(out: Mat2, steps: readonly SystemStep[]): Mat2 {
	const t = create();
	identity(out);
	for (const step of steps) {
		if (step.kind === 'gap') multiply(out, translation(t, step.lengthMm, step.index ?? 1), out);
		else multiply(out, step.element.matrix, out);
	}
	return out;
}

/**
 * A placed set of elements between an object plane and an image plane, all in air:
 * object plane → objectDistanceMm → element 0 → gapsMm[0] → element 1 → … →
 * backDistanceMm → image plane. Gaps are vertex to vertex.
 */
export interface Layout {
	/** Object plane to the first vertex of the first element, mm. */
	readonly objectDistanceMm: number;
	/** Elements in the order light meets them. */
	readonly elements: readonly ThickElement[];
	/** Vertex gaps between consecutive elements, mm (length = elements − 1). */
	readonly gapsMm: readonly number[];
	/** Last vertex of the last element to the image (target) plane, mm. */
	readonly backDistanceMm: number;
}

/** The layout as system steps (object distance, elements and gaps, back distance). */
export function layoutSteps(layout: Layout): SystemStep[] {
	const steps: SystemStep[] = [{ kind: 'gap', lengthMm: layout.objectDistanceMm }];
	layout.elements.forEach((element, i) => {
		if (i > 0) steps.push({ kind: 'gap', lengthMm: layout.gapsMm[i - 1] });
		steps.push({ kind: 'element', element });
	});
	steps.push({ kind: 'gap', lengthMm: layout.backDistanceMm });
	return steps;
}

/** Object-plane-to-image-plane matrix of a layout, into `out`. */
export function layoutMatrix(out: Mat2, layout: Layout): Mat2 {
	return composeSystem(out, layoutSteps(layout));
}

/** Position of each element's first vertex measured from the object plane, mm. */
export function firstVertexPositionsMm(layout: Layout): number[] {
	const out: number[] = [];
	let z = layout.objectDistanceMm;
	layout.elements.forEach((e, i) => {
		if (i > 0) z += layout.gapsMm[i - 1];
		out.push(z);
		z += e.thicknessMm;
	});
	return out;
}

/** Object plane to image plane, mm (the track length). */
export function trackLengthMm(layout: Layout): number {
	let z = layout.objectDistanceMm + layout.backDistanceMm;
	for (const e of layout.elements) z += e.thicknessMm;
	for (const g of layout.gapsMm) z += g;
	return z;
}

/** The image of an object plane found by `imageAfter`. */
export interface ImageLocation {
	/** Distance from the output plane of the matrix to the image, mm (negative: virtual). */
	readonly imageDistanceMm: number;
	/** Signed lateral magnification (negative: inverted). */
	readonly magnification: number;
}

/**
 * Given the matrix from an object plane to some output plane (both in air), where the
 * image lies after that plane and its magnification: adding a translation d makes
 * B + d·D = 0, so d = −B/D, and the magnification of the imaging matrix is 1/D (its A,
 * since AD = 1 when B = 0). Null when D = 0: the image is at infinity.
 */
export function imageAfter(m: ReadonlyMat2): ImageLocation | null {
	const b = m[1],
		d = m[3];
	if (Math.abs(d) <= 1e-15) return null;
	return { imageDistanceMm: -b / d, magnification: 1 / d };
}

/**
 * True when `m` images its input plane onto its output plane: |B| ≤ tolMm (mm).
 * The magnification is then `m[0]` (A).
 */
export function isImaging(m: ReadonlyMat2, tolMm = 1e-9): boolean {
	return Math.abs(m[1]) <= tolMm;
}

/** Cardinal points of a whole system between its first and last plane (null: afocal). */
export function systemCardinalPoints(m: ReadonlyMat2): CardinalPoints | null {
	return cardinalPoints(m);
}
