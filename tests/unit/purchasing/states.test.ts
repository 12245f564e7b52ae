import { describe, expect, it } from 'vitest';
import { REQUEST_STATUSES, type RequestStatus } from '$lib/server/db/schema/purchasing';
import { canStep, NAMED_STEPS, RECEIVABLE, statusAfterReceipt } from '$lib/server/purchasing/states';

// The request life of the issue: draft → requested → ordered → received (partly or fully) → closed, or cancelled.
const LEGAL = new Set([
	'draft>requested',
	'draft>cancelled',
	'requested>draft',
	'requested>ordered',
	'requested>cancelled',
	'ordered>cancelled',
	'partly-received>closed',
	'received>closed'
]);

describe('request state machine', () => {
	it('allows exactly the listed named steps, for every pair of statuses', () => {
		for (const from of REQUEST_STATUSES) {
			for (const to of REQUEST_STATUSES) {
				expect(canStep(from, to), `${from} → ${to}`).toBe(LEGAL.has(`${from}>${to}`));
			}
		}
	});

	it('never names a received status: goods decide it', () => {
		for (const from of REQUEST_STATUSES) {
			expect(NAMED_STEPS[from]).not.toContain('received');
			expect(NAMED_STEPS[from]).not.toContain('partly-received');
		}
	});

	it('closed and cancelled are final', () => {
		expect(NAMED_STEPS.closed).toEqual([]);
		expect(NAMED_STEPS.cancelled).toEqual([]);
	});

	it('receives only on ordered or partly received requests', () => {
		expect([...RECEIVABLE].sort()).toEqual(['ordered', 'partly-received']);
	});

	it('a receipt of all units gives received, fewer partly received', () => {
		expect(statusAfterReceipt(5, 4)).toBe<RequestStatus>('partly-received');
		expect(statusAfterReceipt(5, 5)).toBe<RequestStatus>('received');
		expect(statusAfterReceipt(1, 1)).toBe<RequestStatus>('received');
	});
});
