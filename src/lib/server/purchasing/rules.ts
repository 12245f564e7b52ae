/**
 * The purchasing rules as pure functions (no database): when a part is flagged, and how many
 * units the reorder board suggests. Quantities are whole units.
 *
 * Flagging (decided for Glasscrib, documented in DEVELOPERS.md):
 * - `reorder-point`: the part takes part in reordering (reorder point > 0; a reorder point of 0
 *   means the lab does not keep the part on the shelf) and available ≤ reorder point;
 * - `over-reserved`: active unexpired reservations exceed the usable units on hand (possible after
 *   scrap, adjust or a condition change), whatever the reorder point.
 * Archived parts are never flagged.
 */

export type FlagReason = 'reorder-point' | 'over-reserved';

export interface StockFigures {
	/** Usable units in all locations. */
	onHand: number;
	/** Units of active unexpired reservations. */
	reserved: number;
	/** Reorder point of the part (units). */
	reorderPoint: number;
	archived?: boolean;
}

/** max(0, on hand − reserved): what availability.ts calls available. */
export const availableOf = (f: Pick<StockFigures, 'onHand' | 'reserved'>) => Math.max(0, f.onHand - f.reserved);

/** Why the part is flagged, or null when it is not (see the module comment). Over-reserved wins. */
export function flagReason(f: StockFigures): FlagReason | null {
	if (f.archived) return null;
	if (f.reserved > f.onHand) return 'over-reserved';
	if (f.reorderPoint > 0 && availableOf(f) <= f.reorderPoint) return 'reorder-point';
	return null;
}

export interface SuggestionInput extends StockFigures {
	reorderQuantity: number;
	/** Net units used in the last `usageDays` days (issued + scrapped − returned, not below 0). */
	usage: number;
	usageDays: number;
	leadTimeDays: number | null;
	/** Units already on open requests (requested or ordered, not yet received). */
	onOrder: number;
}

/**
 * Suggested order quantity: enough to lift the free stock (on hand − reserved, which may be
 * negative when over-reserved) one unit above the reorder point after the lead time's expected
 * usage, and never less than the part's reorder quantity; minus what is already on order; not below 0.
 *   need = (reorderPoint + 1) − (onHand − reserved) + ceil(usage / usageDays × leadTimeDays)
 *   suggested = max(0, max(need, reorderQuantity) − onOrder)
 * An order-up-to rule with lead-time demand: common practice, no source.
 */
export function suggestedQuantity(s: SuggestionInput): number {
	return suggestionSteps(s).suggested;
}

/** The figures of `suggestedQuantity`, step by step (the board shows them). */
export function suggestionSteps(s: SuggestionInput) {
	const daily = s.usageDays > 0 ? Math.max(0, s.usage) / s.usageDays : 0;
	const leadDemand = Math.ceil(daily * Math.max(0, s.leadTimeDays ?? 0) - 1e-9);
	const need = s.reorderPoint + 1 - (s.onHand - s.reserved) + leadDemand;
	const target = Math.max(need, s.reorderQuantity);
	const onOrder = Math.max(0, s.onOrder);
	return { leadDemand, need, target, onOrder, suggested: Math.max(0, target - onOrder) };
}

/**
 * The arithmetic behind a suggestion in words, e.g. "reorder point 2 + 1 − (3 usable − 1 reserved)
 * + 0 used in the lead time = 1; at least the reorder quantity 4; − 0 on order = 4". Only usable units
 * count: quarantined and damaged ones are named, as not counted, when there are any.
 */
export function explainSuggestion(s: SuggestionInput & { quarantine?: number; damaged?: number }): string {
	const x = suggestionSteps(s);
	const parts = [`reorder point ${s.reorderPoint} + 1 − (${s.onHand} usable − ${s.reserved} reserved) + ${x.leadDemand} used in the lead time = ${x.need}`];
	const lifted = s.reorderQuantity > 0 && s.reorderQuantity > x.need;
	if (lifted) parts.push(`at least the reorder quantity ${s.reorderQuantity}`);
	const raw = (lifted ? s.reorderQuantity : x.need) - x.onOrder;
	parts.push(`− ${x.onOrder} on order = ${x.suggested}${raw < 0 ? ' (not below 0)' : ''}`);
	const aside = [s.quarantine ? `${s.quarantine} in quarantine` : '', s.damaged ? `${s.damaged} damaged` : ''].filter(Boolean);
	return parts.join('; ') + (aside.length ? ` (${aside.join(' and ')} not counted)` : '');
}
