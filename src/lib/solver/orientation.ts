/**
 * The one wording of which way round a part goes on the bench, used by the solver's answers,
 * the /build tables, the setup page and the build sheet. The words name what a technician can
 * check by eye on the part in hand: which outer face is flat, convex or concave, and, when both
 * bend the same way, which is the more strongly curved (never a surface number, which cannot be
 * seen on the glass; a cemented doublet shows only its two outer faces). When the two outer faces
 * look alike the words say to go by the datasheet's marking, and name the face by its radius.
 *
 * Imaging questions say "toward the object" / "toward the image"; a beam has no object, so beam
 * and afocal questions say "toward the incoming beam" / "toward the outgoing beam".
 */

/** What the wording needs of a placed part. */
export interface OrientationInput {
	/** Turned round from its catalogue orientation. */
	reversed: boolean;
	/** Turning it round gives the same optics (equiconvex lens, window). */
	symmetric?: boolean;
	/** Surfaces in the order light meets them (radius null = flat); null for a black-box part. */
	surfaces: readonly { radiusMm: number | null }[] | null;
}

/** The wording of which way round a part goes (see `orientationParts`). */
export interface Orientation {
	way: string;
	sides: string | null;
	brief: string | null;
}

/** The question the part serves: imaging (object and image) or a laser beam (beam, afocal). */
export type OrientationMode = 'imaging' | 'beam' | 'afocal';

/**
 * Two outer faces that bend the same way count as "alike" to the eye unless one is at least this
 * much more strongly curved (ratio of curvatures; common practice, no source).
 */
export const VISIBLY_STRONGER = 1.25;

/** The two sides of the bench in the words of the question. */
function sidesOf(mode: OrientationMode): { from: string; to: string } {
	return mode === 'imaging' ? { from: 'the object', to: 'the image' } : { from: 'the incoming beam', to: 'the outgoing beam' };
}

type Shape = 'flat' | 'convex' | 'concave';

/**
 * The shape of an outer face as seen from outside the part: the face the light meets first is
 * convex when its centre of curvature lies behind it (R > 0), the last face when R < 0.
 */
function shapeOf(radiusMm: number | null, first: boolean): Shape {
	if (radiusMm === null || !Number.isFinite(radiusMm)) return 'flat';
	return (first ? radiusMm > 0 : radiusMm < 0) ? 'convex' : 'concave';
}

/** A radius as written on a drawing: "R 61.5 mm" (magnitude; the shape word says which way it bends). */
function radiusText(radiusMm: number | null): string {
	if (radiusMm === null) return 'flat';
	const r = Math.abs(radiusMm);
	return `R ${Number(r.toPrecision(4))} mm`;
}

/**
 * The two halves of the wording: `way` is the check by eye, e.g. "curved (convex) face toward
 * the object, flat face toward the image" or, for a cemented doublet, "more strongly curved face
 * toward the object, flatter face toward the image (both convex)"; `sides` says how that stands
 * to the catalogue listing, with the radii of the two outer faces ("turned round from the
 * catalogue listing; R 129 mm face toward the object, R 61.5 mm face toward the image"), or null;
 * `brief`, the start of `sides` that a results table shows beside `way` ("turned round from the
 * catalogue listing"), or null when there is nothing to add (as listed, symmetric, no prescription).
 */
export function orientationParts(e: OrientationInput, mode: OrientationMode = 'imaging'): Orientation {
	const { from, to } = sidesOf(mode);
	if (e.symmetric) return { way: 'either way round (symmetric part: both faces alike)', sides: null, brief: null };
	const s = e.surfaces;
	if (s === null || s.length < 2) {
		return {
			way: e.reversed ? `datasheet's back face (as marked) toward ${from}` : `datasheet's front face (as marked) toward ${from}`,
			sides: 'no prescription on file: go by the datasheet marking',
			brief: null
		};
	}
	const rf = s[0].radiusMm,
		rb = s[s.length - 1].radiusMm;
	const a = shapeOf(rf, true),
		b = shapeOf(rb, false);
	const catalogue = e.reversed ? 'turned round from the catalogue listing' : 'as in the catalogue listing';
	const faceWord = (r: number | null) => (r === null ? 'flat face' : `${radiusText(r)} face`);
	const sides = `${catalogue}; ${faceWord(rf)} toward ${from}, ${faceWord(rb)} toward ${to}`;
	const named = (shape: Shape) => (shape === 'flat' ? 'flat' : `curved (${shape})`);
	let way: string;
	if (a !== b && (a === 'flat' || b === 'flat')) {
		way = `${named(a)} face toward ${from}, ${named(b)} face toward ${to}`;
	} else if (a !== b) {
		way = `${a} face toward ${from}, ${b} face toward ${to}`;
	} else if (a === 'flat') {
		way = `both outer faces flat: go by the datasheet marking (${catalogue})`;
	} else {
		const kf = 1 / Math.abs(rf as number),
			kb = 1 / Math.abs(rb as number);
		const ratio = Math.max(kf, kb) / Math.min(kf, kb);
		if (ratio >= VISIBLY_STRONGER) {
			way = kf > kb ? `more strongly curved face toward ${from}, flatter face toward ${to} (both ${a})` : `flatter face toward ${from}, more strongly curved face toward ${to} (both ${a})`;
		} else {
			way = `both outer faces ${a} and nearly alike: go by the datasheet marking; the ${radiusText(rf)} face toward ${from}`;
		}
	}
	return { way, sides, brief: e.reversed ? catalogue : null };
}

/** Both halves in one line: "curved (convex) face toward the object, flat face toward the image; as in the catalogue listing; …". */
export function orientationText(e: OrientationInput, mode: OrientationMode = 'imaging'): string {
	const { way, sides } = orientationParts(e, mode);
	return sides ? `${way}; ${sides}` : way;
}

/**
 * The parts of the wording for a solution element as the pages get it (recomputed from its
 * surfaces, so setups saved with older words read the same as new answers). Setups saved before
 * `symmetric` was part of the answer carry only the old words, which began "either side" for a
 * symmetric part.
 */
export function orientationOf(e: OrientationInput & { orientation?: string }, mode: OrientationMode = 'imaging'): Orientation {
	return orientationParts({ ...e, symmetric: e.symmetric ?? e.orientation?.startsWith('either side') ?? false }, mode);
}
