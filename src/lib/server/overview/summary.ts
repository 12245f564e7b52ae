import { and, count, countDistinct, desc, eq, gt, inArray, isNull, sql } from 'drizzle-orm';
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

/**
 * Parts with units in quarantine (waiting for inspection), most units first, at most `limit` of them,
 * and how many such parts there are. Reads the stock table through its (condition, part, quantity) index.
 */
export async function quarantineParts(db: DbOrTx, limit = 5) {
	const where = and(eq(stock.condition, 'quarantine'), gt(stock.quantity, 0));
	const units = sql<string>`sum(${stock.quantity})`;
	const [rows, [{ n }]] = await Promise.all([
		db
			.select({ partId: stock.partId, sku: parts.sku, name: parts.name, units })
			.from(stock)
			.innerJoin(parts, eq(parts.id, stock.partId))
			.where(where)
			.groupBy(stock.partId, parts.sku, parts.name)
			.orderBy(desc(units), parts.sku)
			.limit(limit),
		db.select({ n: countDistinct(stock.partId) }).from(stock).where(where)
	]);
	// the usable units beside them, so the list and the part page say the same ("0 usable · 1 in quarantine")
	const usable = rows.length
		? await db
				.select({ partId: stock.partId, q: sql<string>`sum(${stock.quantity})` })
				.from(stock)
				.where(and(eq(stock.condition, 'usable'), inArray(stock.partId, rows.map((r) => r.partId))))
				.groupBy(stock.partId)
		: [];
	const usableOf = new Map(usable.map((u) => [u.partId, Number(u.q)]));
	return {
		total: Number(n),
		items: rows.map((r) => ({ partId: r.partId, sku: r.sku, name: r.name, units: Number(r.units), usable: usableOf.get(r.partId) ?? 0 }))
	};
}
