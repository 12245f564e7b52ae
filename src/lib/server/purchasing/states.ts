/**
 * The life of a purchase request, as a table of allowed steps (pure, no database).
 *
 *   draft ──► requested ──► ordered ──► partly-received ──► received ──► closed
 *     │           │            │              │                 ▲
 *     └───────────┴────────────┴──► cancelled  └── close short ─┘ (closed)
 *
 * - `partly-received` and `received` are reached only by receiving goods (`receive`), never by
 *   naming the status: the received quantity decides which of the two it is.
 * - A request with goods received can no longer be cancelled (the goods are in the ledger);
 *   a partly received one may be closed short when the rest will not come.
 */
import type { RequestStatus } from '$lib/server/db/schema';

/** Statuses a client may ask for by name, from each status. */
export const NAMED_STEPS: Record<RequestStatus, readonly RequestStatus[]> = {
	draft: ['requested', 'cancelled'],
	requested: ['draft', 'ordered', 'cancelled'],
	ordered: ['cancelled'],
	'partly-received': ['closed'],
	received: ['closed'],
	closed: [],
	cancelled: []
};

/** Statuses in which goods may be received. */
export const RECEIVABLE: readonly RequestStatus[] = ['ordered', 'partly-received'];

/** Statuses whose quantity and price may still be edited. */
export const EDITABLE: readonly RequestStatus[] = ['draft', 'requested'];

/** Statuses that count as "on order" for the reorder board (units asked for, not yet here). */
export const OPEN: readonly RequestStatus[] = ['draft', 'requested', 'ordered', 'partly-received'];

/** True when `to` may be asked for by name from `from`. */
export function canStep(from: RequestStatus, to: RequestStatus): boolean {
	return NAMED_STEPS[from].includes(to);
}

/** The status after receiving goods: all ordered units here → received, else partly-received. */
export function statusAfterReceipt(quantity: number, receivedQuantity: number): RequestStatus {
	return receivedQuantity >= quantity ? 'received' : 'partly-received';
}

/** Plain words for each status (the UI and mails use them). */
export const STATUS_LABELS: Record<RequestStatus, string> = {
	draft: 'Draft',
	requested: 'Requested',
	ordered: 'Ordered',
	'partly-received': 'Partly received',
	received: 'Received',
	closed: 'Closed',
	cancelled: 'Cancelled'
};
