/**
 * The one wording of which way round a part goes on the bench, used by the solver's answers,
 * the /build table, the setup page and the build sheet. Surfaces are numbered as in the part's
 * prescription (1 = first catalogue surface, N = last), so the words hold for doublets too,
 * where "convex side" would not say which of three surfaces is meant.
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

/**
 * The two halves of the wording: `way` says which catalogue surface faces the object, e.g.
 * "as catalogued (surface 1 faces the object)" or "reversed (surface 3 faces the object)";
 * `sides` is set for a singlet with one flat side ("curved side toward the object, flat side
 * toward the image"), else null.
 */
export function orientationParts(e: OrientationInput): { way: string; sides: string | null } {
	if (e.symmetric) return { way: 'either way round (symmetric part: both faces alike)', sides: null };
	const s = e.surfaces;
	if (s === null || s.length < 2) {
		return { way: e.reversed ? 'reversed (datasheet back faces the object)' : 'as catalogued (datasheet front faces the object)', sides: null };
	}
	const n = s.length;
	const way = e.reversed ? `reversed (surface ${n} faces the object)` : 'as catalogued (surface 1 faces the object)';
	if (n !== 2) return { way, sides: null };
	const front = s[0].radiusMm,
		back = s[1].radiusMm;
	if (front === null && back !== null) return { way, sides: 'flat side toward the object, curved side toward the image' };
	if (front !== null && back === null) return { way, sides: 'curved side toward the object, flat side toward the image' };
	return { way, sides: null };
}

/** Both halves in one line: "reversed (surface 2 faces the object); flat side toward the object, …". */
export function orientationText(e: OrientationInput): string {
	const { way, sides } = orientationParts(e);
	return sides ? `${way}; ${sides}` : way;
}

/**
 * The parts of the wording for a solution element as the pages get it. Setups saved before
 * `symmetric` was part of the answer carry only the old words, which began "either side" for a
 * symmetric part.
 */
export function orientationOf(e: OrientationInput & { orientation?: string }): { way: string; sides: string | null } {
	return orientationParts({ ...e, symmetric: e.symmetric ?? e.orientation?.startsWith('either side') ?? false });
}
