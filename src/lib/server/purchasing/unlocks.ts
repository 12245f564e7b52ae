/**
 * Which one purchase unlocks a setup. Pure functions over solutions (the solver's Solution
 * JSON, as saved in `setups.solution` or returned by a search with availableOnly: false) and
 * the current availability of their parts; no database, no solver.
 *
 * A solution needs, per part, as many units as it has elements of that part. It is
 * **buildable** when every part has that many available units; it is **unlocked by one
 * purchase** when exactly one part falls short (buy the missing units of that part).
 */

/** The part of a solution element that matters here. */
export interface ElementRef {
	partId: number;
	sku?: string;
}

/** Units needed per part by a solution's elements. */
export function unitsNeeded(elements: readonly ElementRef[]): Map<number, number> {
	const need = new Map<number, number>();
	for (const e of elements) need.set(e.partId, (need.get(e.partId) ?? 0) + 1);
	return need;
}

export interface Shortfall {
	partId: number;
	/** Units to buy so that the part covers the solution. */
	missing: number;
}

/** Parts of the solution with fewer available units than it needs (in part id order). */
export function shortfalls(elements: readonly ElementRef[], available: (partId: number) => number): Shortfall[] {
	const out: Shortfall[] = [];
	for (const [partId, n] of [...unitsNeeded(elements)].sort((a, b) => a[0] - b[0])) {
		const have = Math.max(0, available(partId));
		if (have < n) out.push({ partId, missing: n - have });
	}
	return out;
}

/** The single purchase that makes the solution buildable, or null when it is buildable already or needs two purchases. */
export function singlePurchase(elements: readonly ElementRef[], available: (partId: number) => number): Shortfall | null {
	const s = shortfalls(elements, available);
	return s.length === 1 ? s[0] : null;
}

/**
 * The best solution (first in the given rank order) that one purchase unlocks, with that purchase.
 * Solutions that are buildable already are skipped: they need nothing.
 */
export function bestSinglePurchase<S extends { elements: readonly ElementRef[] }>(
	rankedSolutions: readonly S[],
	available: (partId: number) => number
): { solution: S; purchase: Shortfall } | null {
	for (const solution of rankedSolutions) {
		const purchase = singlePurchase(solution.elements, available);
		if (purchase) return { solution, purchase };
	}
	return null;
}

/** A saved setup as far as unlocks care: its id, name and saved solution elements. */
export interface SetupRef {
	id: number;
	name: string;
	elements: readonly ElementRef[];
}

/**
 * Per part: the saved setups that cannot be built now and that buying this one part would
 * unlock (from each setup's saved solution), and the setups that use the part at all.
 * `available(partId, setupId)` is what the setup may use: available stock plus the units its own
 * active reservations hold (kept for it, so a fully reserved setup is buildable and unlocks nothing).
 */
export function setupIndex(setups: readonly SetupRef[], available: (partId: number, setupId: number) => number) {
	const using = new Map<number, number[]>();
	const unlocking = new Map<number, { setupId: number; name: string; missing: number }[]>();
	for (const s of setups) {
		for (const partId of unitsNeeded(s.elements).keys()) {
			const list = using.get(partId) ?? [];
			list.push(s.id);
			using.set(partId, list);
		}
		const p = singlePurchase(s.elements, (partId) => available(partId, s.id));
		if (p) {
			const list = unlocking.get(p.partId) ?? [];
			list.push({ setupId: s.id, name: s.name, missing: p.missing });
			unlocking.set(p.partId, list);
		}
	}
	return { using, unlocking };
}
