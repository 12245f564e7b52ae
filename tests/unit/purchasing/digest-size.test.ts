import { describe, expect, it } from 'vitest';
import { DIGEST_MAX_BYTES, digestText, isPermanentMailRefusal, type FlaggedPart } from '$lib/server/purchasing/flags';

const part = (i: number): FlaggedPart => ({
	partId: i,
	sku: `TW-DIG-${String(i).padStart(5, '0')}`,
	name: `Plano-convex test lens ${i} (ø25 mm, N-BK7 equivalent)`,
	onHand: 0,
	reserved: 0,
	available: 0,
	reorderPoint: 2,
	reorderQuantity: 5,
	supplier: 'Quillmere Glassworks',
	leadTimeDays: 14,
	reason: 'reorder-point'
});
const board = 'http://127.0.0.1:4173/reorder';

describe('the reorder digest stays below the mail size limit', () => {
	it('lists every part when they fit', () => {
		const text = digestText([part(1), part(2)], board);
		expect(text).toContain('2 parts need reordering');
		expect(text).toContain('TW-DIG-00001');
		expect(text).toContain('TW-DIG-00002');
		expect(text).not.toContain('more part');
	});

	it('summarises 3,000 flagged parts within DIGEST_MAX_BYTES, with the count and the board link', () => {
		const list = Array.from({ length: 3000 }, (_, i) => part(i + 1));
		const text = digestText(list, board);
		const bytes = Buffer.byteLength(text, 'utf8');
		expect(bytes).toBeLessThanOrEqual(DIGEST_MAX_BYTES);
		expect(bytes).toBeGreaterThan(DIGEST_MAX_BYTES * 0.9); // it fills what it may, not much less
		expect(text).toContain('3000 parts need reordering');
		const listed = text.split('\n').filter((l) => l.startsWith('- TW-DIG-')).length;
		expect(listed).toBeGreaterThan(100);
		expect(text).toContain(`and ${3000 - listed} more parts: the whole list is on the reorder board, ${board}`);
		expect(text).toContain('TW-DIG-00001'); // the first ones, in the list's order
	});

	it('keeps to a small limit too', () => {
		const text = digestText(Array.from({ length: 40 }, (_, i) => part(i + 1)), board, 1200);
		expect(Buffer.byteLength(text, 'utf8')).toBeLessThanOrEqual(1200);
		expect(text).toMatch(/and \d+ more parts/);
	});

	it('tells a permanent refusal (5xx) from one worth retrying', () => {
		expect(isPermanentMailRefusal(Object.assign(new Error('552 Message exceeds fixed maximum message size'), { responseCode: 552 }))).toBe(true);
		expect(isPermanentMailRefusal(Object.assign(new Error('451 try later'), { responseCode: 451 }))).toBe(false);
		expect(isPermanentMailRefusal(new Error('connect ECONNREFUSED'))).toBe(false);
	});
});
