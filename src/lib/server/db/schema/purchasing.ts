import { char, datetime, index, int, mysqlEnum, mysqlTable, text, timestamp, uniqueIndex, varchar } from 'drizzle-orm/mysql-core';
import { id, ref } from './columns';
import { users } from './auth';
import { parts, suppliers } from './catalogue';
import { locations, movements, setups } from './stock';


/**
 * draft → requested → ordered → partly-received → received → closed; cancelled from any state
 * before goods arrive. The allowed steps live in `src/lib/server/purchasing/states.ts`.
 */
export const REQUEST_STATUSES = ['draft', 'requested', 'ordered', 'partly-received', 'received', 'closed', 'cancelled'] as const;
export type RequestStatus = (typeof REQUEST_STATUSES)[number];

/** A purchase request for one part. Quantities in units; money in integer minor units of `currency`. */
export const purchaseRequests = mysqlTable(
	'purchase_requests',
	{
		id: id(),
		partId: ref('part_id')
			.notNull()
			.references(() => parts.id),
		supplierId: ref('supplier_id').references(() => suppliers.id),
		status: mysqlEnum('status', REQUEST_STATUSES).notNull().default('draft'),
		quantity: int('quantity', { unsigned: true }).notNull(),
		receivedQuantity: int('received_quantity', { unsigned: true }).notNull().default(0),
		/** Price per unit when the request was made (copied from the part, editable until ordered). */
		unitPriceMinor: int('unit_price_minor'),
		currency: char('currency', { length: 3 }).notNull().default('EUR'),
		leadTimeDays: int('lead_time_days'),
		/** Supplier's order reference, once ordered. */
		orderReference: varchar('order_reference', { length: 80 }),
		note: text('note'),
		createdBy: ref('created_by')
			.notNull()
			.references(() => users.id),
		createdAt: timestamp('created_at').notNull().defaultNow(),
		updatedAt: timestamp('updated_at').notNull().defaultNow().onUpdateNow()
	},
	(t) => [index('purchase_requests_part_idx').on(t.partId, t.status), index('purchase_requests_status_idx').on(t.status, t.updatedAt)]
);

/** Who did what to a request and when: every state change and every receipt (with its ledger movement). */
export const purchaseRequestEvents = mysqlTable(
	'purchase_request_events',
	{
		id: id(),
		requestId: ref('request_id')
			.notNull()
			.references(() => purchaseRequests.id),
		userId: ref('user_id')
			.notNull()
			.references(() => users.id),
		fromStatus: mysqlEnum('from_status', REQUEST_STATUSES),
		toStatus: mysqlEnum('to_status', REQUEST_STATUSES).notNull(),
		/** Units received by this event (receipts only). */
		quantity: int('quantity', { unsigned: true }),
		locationId: ref('location_id').references(() => locations.id),
		movementId: ref('movement_id').references(() => movements.id),
		note: text('note'),
		at: datetime('at', { fsp: 3 }).notNull()
	},
	(t) => [index('purchase_request_events_request_idx').on(t.requestId, t.at)]
);

/**
 * Digest de-duplication: one row per time a part was reported as flagged. `openPartId` equals
 * `partId` while the flag stands and is NULL once the part recovered; its unique index (NULLs do
 * not collide) lets at most one open notice exist per part, whichever instance writes it.
 */
export const flagNotices = mysqlTable(
	'flag_notices',
	{
		id: id(),
		partId: ref('part_id')
			.notNull()
			.references(() => parts.id),
		openPartId: ref('open_part_id'),
		/** Why the part was flagged: 'reorder-point' or 'over-reserved'. */
		reason: varchar('reason', { length: 32 }).notNull(),
		available: int('available').notNull(),
		reportedAt: datetime('reported_at', { fsp: 3 }).notNull(),
		clearedAt: datetime('cleared_at', { fsp: 3 })
	},
	(t) => [uniqueIndex('flag_notices_open_uq').on(t.openPartId), index('flag_notices_part_idx').on(t.partId, t.reportedAt)]
);

export type PurchaseRequest = typeof purchaseRequests.$inferSelect;
export type PurchaseRequestEvent = typeof purchaseRequestEvents.$inferSelect;
export type FlagNotice = typeof flagNotices.$inferSelect;

/**
 * Saved setups waiting for parts: a row opens (open_setup_id set) when a check first finds the
 * setup short of parts, and closes when a check finds it buildable again, which mails its owner
 * once. The unique index on open_setup_id makes the open/close decision hold across instances.
 */
export const setupWaits = mysqlTable(
	'setup_waits',
	{
		id: id(),
		setupId: ref('setup_id')
			.notNull()
			.references(() => setups.id, { onDelete: 'cascade' }),
		openSetupId: ref('open_setup_id'),
		since: datetime('since', { fsp: 3 }).notNull(),
		/** When a check found it buildable (and mailed the owner), or found it built or gone. */
		endedAt: datetime('ended_at', { fsp: 3 }),
		/** 'buildable' (owner mailed) or 'built' (its parts were issued to it: nothing to tell). */
		outcome: varchar('outcome', { length: 16 })
	},
	(t) => [uniqueIndex('setup_waits_open_uq').on(t.openSetupId), index('setup_waits_setup_idx').on(t.setupId)]
);
export type SetupWait = typeof setupWaits.$inferSelect;
