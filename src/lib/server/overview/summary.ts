import { count, isNull, sql, eq } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { locations, parts, stock } from '$lib/server/db/schema';

/** Headline numbers for the overview page. */
export async function stockSummary(db: DbOrTx) {
	const [p] = await db.select({ n: count() }).from(parts).where(isNull(parts.archivedAt));
	const [l] = await db.select({ n: count() }).from(locations).where(isNull(locations.archivedAt));
	const [s] = await db
		.select({ units: sql<string>`coalesce(sum(${stock.quantity}), 0)` })
		.from(stock)
		.where(eq(stock.condition, 'usable'));
	return { parts: p.n, locations: l.n, usableUnits: Number(s.units) };
}
