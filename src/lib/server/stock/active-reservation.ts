/**
 * The one rule of an active reservation, on one clock: its status is 'active' and its `until` is still
 * ahead on the database's clock (`utc_timestamp()`: `until` is stored in UTC). Expired reservations
 * stop counting without a job. Every query that counts, lists or judges active reservations uses
 * these fragments, never the app's `new Date()`: app instances and the database may disagree by a
 * few seconds, and two queries of one request must not disagree on the same row.
 */
import { and, eq, gt, sql, type SQL } from 'drizzle-orm';
import { reservations } from '$lib/server/db/schema';

/** Condition on the `reservations` table: active and not expired. */
export const activeReservation: SQL = and(eq(reservations.status, 'active'), gt(reservations.until, sql`utc_timestamp()`))!;

/** The same rule for hand-written SQL over `reservations` read under the alias `alias` (e.g. `r`). */
export function activeReservationAs(alias: string): SQL {
	const r = sql.raw(alias);
	return sql`${r}.status = 'active' and ${r}.until > utc_timestamp()`;
}

/** A selected column: true when the row is active by the rule now (a listed reservation's state). */
export const isActiveNow = sql<boolean>`(${activeReservation})`.mapWith((v) => Number(v) === 1);
