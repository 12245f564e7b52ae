import {
	bigint,
	datetime,
	index,
	int,
	json,
	mysqlEnum,
	mysqlTable,
	text,
	timestamp,
	uniqueIndex,
	varchar
} from 'drizzle-orm/mysql-core';
import { id, ref } from './columns';
import { users } from './auth';
import { parts } from './catalogue';


export const CONDITIONS = ['usable', 'quarantine', 'damaged'] as const;
export type Condition = (typeof CONDITIONS)[number];

export const MOVEMENT_KINDS = ['receive', 'move', 'issue', 'return', 'adjust', 'scrap', 'condition'] as const;
export type MovementKind = (typeof MOVEMENT_KINDS)[number];

/** A storage place: code is a cabinet/drawer/bin path such as "C2-D3-B04". */
export const locations = mysqlTable(
	'locations',
	{
		id: id(),
		code: varchar('code', { length: 64 }).notNull(),
		name: varchar('name', { length: 120 }).notNull(),
		archivedAt: datetime('archived_at'),
		createdAt: timestamp('created_at').notNull().defaultNow()
	},
	(t) => [uniqueIndex('locations_code_uq').on(t.code)]
);

/** How many units of a part sit in a location in a condition. Unsigned: never negative. */
export const stock = mysqlTable(
	'stock',
	{
		id: id(),
		partId: ref('part_id')
			.notNull()
			.references(() => parts.id),
		locationId: ref('location_id')
			.notNull()
			.references(() => locations.id),
		condition: mysqlEnum('condition', CONDITIONS).notNull(),
		quantity: int('quantity', { unsigned: true }).notNull().default(0)
	},
	(t) => [
		uniqueIndex('stock_part_loc_cond_uq').on(t.partId, t.locationId, t.condition),
		index('stock_location_idx').on(t.locationId),
		// Usable units per part read from the index alone (the catalogue's "available only" count).
		index('stock_usable_part_idx').on(t.condition, t.partId, t.quantity)
	]
);

export const projects = mysqlTable(
	'projects',
	{
		id: id(),
		code: varchar('code', { length: 32 }).notNull(),
		name: varchar('name', { length: 160 }).notNull(),
		ownerId: ref('owner_id').references(() => users.id),
		createdAt: timestamp('created_at').notNull().defaultNow()
	},
	(t) => [uniqueIndex('projects_code_uq').on(t.code)]
);

/**
 * The ledger: append-only. A movement takes `quantity` units out of (fromLocation, fromCondition)
 * and/or puts them into (toLocation, toCondition). Summing to-minus-from per bucket gives the stock table.
 */
export const movements = mysqlTable(
	'movements',
	{
		id: id(),
		kind: mysqlEnum('kind', MOVEMENT_KINDS).notNull(),
		partId: ref('part_id')
			.notNull()
			.references(() => parts.id),
		quantity: int('quantity', { unsigned: true }).notNull(),
		fromLocationId: ref('from_location_id').references(() => locations.id),
		fromCondition: mysqlEnum('from_condition', CONDITIONS),
		toLocationId: ref('to_location_id').references(() => locations.id),
		toCondition: mysqlEnum('to_condition', CONDITIONS),
		userId: ref('user_id')
			.notNull()
			.references(() => users.id),
		/** Person or place stock was issued to, free text. */
		issuedTo: varchar('issued_to', { length: 160 }),
		projectId: ref('project_id').references(() => projects.id),
		reason: varchar('reason', { length: 200 }),
		note: text('note'),
		/** Links such as a purchase request or a reservation. */
		refs: json('refs'),
		at: datetime('at', { fsp: 3 }).notNull()
	},
	(t) => [index('movements_part_at_idx').on(t.partId, t.at), index('movements_at_idx').on(t.at)]
);

export const RESERVATION_STATUSES = ['active', 'released', 'fulfilled'] as const;

/** Units held for a project until a date; active and unexpired reservations reduce what is available. */
export const reservations = mysqlTable(
	'reservations',
	{
		id: id(),
		partId: ref('part_id')
			.notNull()
			.references(() => parts.id),
		userId: ref('user_id')
			.notNull()
			.references(() => users.id),
		projectId: ref('project_id').references(() => projects.id),
		setupId: ref('setup_id'),
		quantity: int('quantity', { unsigned: true }).notNull(),
		until: datetime('until').notNull(),
		status: mysqlEnum('status', RESERVATION_STATUSES).notNull().default('active'),
		note: text('note'),
		createdAt: timestamp('created_at').notNull().defaultNow()
	},
	(t) => [index('reservations_part_idx').on(t.partId, t.status, t.until), index('reservations_user_idx').on(t.userId)]
);

/** A saved solver question with the chosen solution. */
export const setups = mysqlTable(
	'setups',
	{
		id: id(),
		name: varchar('name', { length: 160 }).notNull(),
		userId: ref('user_id')
			.notNull()
			.references(() => users.id),
		projectId: ref('project_id').references(() => projects.id),
		query: json('query').notNull(),
		solution: json('solution').notNull(),
		createdAt: timestamp('created_at').notNull().defaultNow(),
		updatedAt: timestamp('updated_at').notNull().defaultNow().onUpdateNow()
	},
	(t) => [index('setups_user_idx').on(t.userId)]
);

/** A single counter bumped in the same transaction as any part or stock change (solver snapshot key). */
export const stockVersion = mysqlTable('stock_version', {
	id: int('id').primaryKey(),
	version: bigint('version', { mode: 'number', unsigned: true }).notNull().default(0)
});

export type Location = typeof locations.$inferSelect;
export type StockRow = typeof stock.$inferSelect;
export type Movement = typeof movements.$inferSelect;
export type Reservation = typeof reservations.$inferSelect;
