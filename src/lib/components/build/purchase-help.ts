/**
 * The /build page's words around "What purchase would help?": why it is offered (no answer from
 * stock good enough) and the note a purchase request carries. No DOM or framework imports.
 */
import { GOOD_EFFICIENCY, percentText } from './beam-words';
import { NEAR_DIFFRACTION_RATIO, edgeBlocked } from '$lib/solver/ranking';
import type { AnySolveResponse, Solution } from '$lib/solver/types';

const fmt = (x: number | null | undefined, d = 2) => (x === null || x === undefined || !Number.isFinite(x) ? '–' : x.toFixed(d));

/**
 * Why a purchase is offered for an answer that has solutions, or null when one is good enough
 * (imaging: near the diffraction limit; beam: at least GOOD_EFFICIENCY).
 */
export function purchaseHelpReason(shown: AnySolveResponse | null): string | null {
	if (!shown?.solutions.length) return null;
	if (shown.request.mode === 'imaging') {
		// An answer whose field edge is blocked is never near the diffraction limit, whatever its axis does.
		const traced = (shown.solutions as Solution[])
			.filter((s) => !edgeBlocked(s))
			.map((s) => s.spot.ratioToAiry)
			.filter((r): r is number => r !== null);
		const best = traced.length ? Math.min(...traced) : null;
		return best !== null && best > NEAR_DIFFRACTION_RATIO
			? `No answer from stock is near the diffraction limit: the best spot is ${fmt(best, 1)}× the Airy radius, and we call a setup near the limit when its RMS spot (axis and field edge) is at most ${NEAR_DIFFRACTION_RATIO}× the Airy radius.`
			: null;
	}
	if (shown.request.mode === 'beam') {
		const best = Math.max(...shown.solutions.map((s) => (s.mode === 'beam' ? s.beam.efficiency : 0)));
		return best < GOOD_EFFICIENCY ? `No answer from stock reaches ${percentText(GOOD_EFFICIENCY)} efficiency: the best reaches ${percentText(best)}.` : null;
	}
	return null;
}

/** The question as a purchase request's note: the parts suggested and what they are for ('' without parts). */
export function purchaseRequestNote(r: AnySolveResponse['request'] | null | undefined, skus: string | undefined): string {
	if (!r || !skus) return '';
	if (r.mode === 'imaging') return `Build from stock: ${skus} for track ${fmt(r.trackMm, 1)} mm, m = ${fmt(r.magnification, 3)}, NA ${fmt(r.objectNA, 3)}.`;
	if (r.mode === 'beam') return `Build from stock: ${skus} to shape a ${fmt(r.wavelengthNm, 1)} nm beam (target waist at ${fmt(r.target.waistPositionMm, 1)} mm).`;
	return `Build from stock: ${skus} to expand a ${fmt(r.wavelengthNm, 1)} nm beam ${fmt(r.expansion, 2)}×.`;
}
