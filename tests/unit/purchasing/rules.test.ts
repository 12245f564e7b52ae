import { describe, expect, it } from 'vitest';
import { availableOf, explainSuggestion, flagReason, suggestedQuantity } from '$lib/server/purchasing/rules';

// The flagging rules are Glasscrib's own (issue "Purchasing", DEVELOPERS.md); the checks sit at each boundary.
describe('flagging at the boundaries', () => {
	const f = (onHand: number, reserved: number, reorderPoint: number, archived = false) => flagReason({ onHand, reserved, reorderPoint, archived });

	it('available equal to the reorder point is flagged, one above is not', () => {
		expect(f(3, 0, 3)).toBe('reorder-point');
		expect(f(4, 0, 3)).toBeNull();
		expect(f(5, 2, 3)).toBe('reorder-point'); // available 3
		expect(f(6, 2, 3)).toBeNull(); // available 4
	});

	it('available below the reorder point is flagged, down to zero', () => {
		expect(f(2, 0, 3)).toBe('reorder-point');
		expect(f(0, 0, 3)).toBe('reorder-point');
	});

	it('a reorder point of 0 never flags by the reorder point (the part is not kept on the shelf)', () => {
		expect(f(0, 0, 0)).toBeNull();
		expect(f(1, 0, 0)).toBeNull();
	});

	it('reserved equal to on hand is not over-reserved; one more is', () => {
		expect(f(5, 5, 0)).toBeNull();
		expect(f(5, 6, 0)).toBe('over-reserved');
		expect(f(0, 1, 0)).toBe('over-reserved');
	});

	it('over-reserved wins over the reorder point, and archived parts are never flagged', () => {
		expect(f(1, 2, 3)).toBe('over-reserved');
		expect(f(0, 2, 3, true)).toBeNull();
		expect(f(0, 0, 3, true)).toBeNull();
	});

	it('available is on hand − reserved, never below 0', () => {
		expect(availableOf({ onHand: 5, reserved: 2 })).toBe(3);
		expect(availableOf({ onHand: 1, reserved: 4 })).toBe(0);
	});
});

describe('suggested order quantity (order-up-to with lead-time demand; common practice, no source)', () => {
	const base = { onHand: 2, reserved: 0, reorderPoint: 3, reorderQuantity: 0, usage: 0, usageDays: 90, leadTimeDays: 0, onOrder: 0 };

	it('lifts free stock one unit above the reorder point', () => {
		// need = (3 + 1) − 2 = 2
		expect(suggestedQuantity(base)).toBe(2);
	});

	it('says its arithmetic, with the figures that give the number (issue 16)', () => {
		expect(explainSuggestion({ ...base, reorderQuantity: 5, onOrder: 1, quarantine: 1 })).toBe(
			'reorder point 3 + 1 − (2 usable − 0 reserved) + 0 used in the lead time = 2; at least the reorder quantity 5; − 1 on order = 4 (1 in quarantine not counted)'
		);
		expect(suggestedQuantity({ ...base, reorderQuantity: 5, onOrder: 1 })).toBe(4);
		expect(explainSuggestion({ ...base, onHand: 9, onOrder: 0 })).toBe('reorder point 3 + 1 − (9 usable − 0 reserved) + 0 used in the lead time = -5; − 0 on order = 0 (not below 0)');
	});

	it('never less than the reorder quantity', () => {
		expect(suggestedQuantity({ ...base, reorderQuantity: 5 })).toBe(5);
	});

	it('adds the expected usage over the lead time, rounded up', () => {
		// 45 units / 90 days = 0.5 a day; 21 days → 10.5 → 11; need = 4 − 2 + 11 = 13
		expect(suggestedQuantity({ ...base, usage: 45, leadTimeDays: 21 })).toBe(13);
		// exactly 10 → 10 (no rounding up of an exact figure)
		expect(suggestedQuantity({ ...base, usage: 45, leadTimeDays: 20 })).toBe(12);
	});

	it('covers a reservation beyond on hand', () => {
		// free stock = 1 − 4 = −3; need = 4 + 3 = 7
		expect(suggestedQuantity({ ...base, onHand: 1, reserved: 4 })).toBe(7);
	});

	it('subtracts what is already on order, not below 0', () => {
		expect(suggestedQuantity({ ...base, reorderQuantity: 5, onOrder: 3 })).toBe(2);
		expect(suggestedQuantity({ ...base, reorderQuantity: 5, onOrder: 9 })).toBe(0);
	});
});
