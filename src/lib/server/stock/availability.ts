/**
 * On hand and available, as DESIGN.md defines them: on hand = usable units in all
 * locations; reserved = units of active reservations whose `until` lies in the future
 * (expired ones stop counting without anyone touching them); available = on hand − reserved,
 * never shown below 0 (it can only dip there when stock was scrapped or issued against
 * a reservation's own units, see operations.ts).
 */
import { and, inArray, sql } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { reservations, stock } from '$lib/server/db/schema';
import { activeReservation, activeReservationAs } from './active-reservation';

export interface Totals {
	onHand: number;
	reserved: number;
	available: number;
	quarantine: number;
	damaged: number;
}

const EMPTY: Totals = { onHand: 0, reserved: 0, available: 0, quarantine: 0, damaged: 0 };

/** Totals of each part in `partIds` (parts without stock get zeros). */
export async function totalsFor(db: DbOrTx, partIds: readonly number[]): Promise<Map<number, Totals>> {
	const out = new Map<number, Totals>();
	if (!partIds.length) return out;
	for (const id of partIds) out.set(id, { ...EMPTY });
	const rows = await db
		.select({ partId: stock.partId, condition: stock.condition, q: sql<string>`sum(${stock.quantity})` })
		.from(stock)
		.where(inArray(stock.partId, [...partIds]))
		.groupBy(stock.partId, stock.condition);
	for (const r of rows) {
		const t = out.get(r.partId)!;
		const q = Number(r.q);
		if (r.condition === 'usable') t.onHand += q;
		else if (r.condition === 'quarantine') t.quarantine += q;
		else t.damaged += q;
	}
	const res = await db
		.select({ partId: reservations.partId, q: sql<string>`sum(${reservations.quantity})` })
		.from(reservations)
		.where(and(inArray(reservations.partId, [...partIds]), activeReservation))
		.groupBy(reservations.partId);
	for (const r of res) out.get(r.partId)!.reserved = Number(r.q);
	for (const t of out.values()) t.available = Math.max(0, t.onHand - t.reserved);
	return out;
}

/** Totals of one part. */
export async function totalsOf(db: DbOrTx, partId: number): Promise<Totals> {
	return (await totalsFor(db, [partId])).get(partId)!;
}

/** SQL for a part's available units, correlated on `partIdColumn` (for the catalogue's "available only" filter). */
export function availableSql(partIdColumn: unknown) {
	return sql<number>`(
		(select coalesce(sum(s.quantity), 0) from stock s where s.part_id = ${partIdColumn} and s.\`condition\` = 'usable')
		- (select coalesce(sum(r.quantity), 0) from reservations r
			where r.part_id = ${partIdColumn} and ${activeReservationAs('r')})
	)`;
}
