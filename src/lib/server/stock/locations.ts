/**
 * Storage locations. A code is a cabinet/drawer/bin path such as "A1-D2" or "C2-D3-B04"
 * (upper-case letters and digits in segments joined by '-'); the name says what lives there.
 * A location that still holds stock cannot be archived.
 */
import { and, asc, desc, eq, gt, isNull, sql } from 'drizzle-orm';
import { z } from 'zod';
import { text } from '$lib/input';
import type { DbOrTx } from '$lib/server/db';
import { inTransaction } from '$lib/server/db/transaction';
import { locations, movements, parts, stock } from '$lib/server/db/schema';
import { DomainError } from '$lib/server/errors';
import { recordAudit } from '$lib/server/audit';

export const locationInputSchema = z
	.object({
		code: text()
			.trim()
			.toUpperCase()
			.min(1, 'Enter a code.')
			.max(64, 'At most 64 characters.')
			.regex(/^[A-Z0-9]+(-[A-Z0-9]+)*$/, 'Letters and digits in segments joined by "-", e.g. A1-D2-B04.'),
		name: text().trim().min(1, 'Enter a name.').max(120, 'At most 120 characters.')
	})
	.strict();

/** `PATCH /locations/:id`: rename (`code`, `name`, checked by `locationInputSchema`) or archive/restore. */
export const locationPatchSchema = z
	.object({ code: z.string().optional(), name: z.string().optional(), archived: z.boolean().optional() })
	.strict();

/** `GET /stock` filters. */
export const stockQuerySchema = z
	.object({ locationId: z.coerce.number().int().positive().optional(), partId: z.coerce.number().int().positive().optional() })
	.strict();

async function assertCodeFree(db: DbOrTx, code: string, exceptId: number | null) {
	const [other] = await db.select({ id: locations.id }).from(locations).where(eq(locations.code, code));
	if (other && other.id !== exceptId) throw new DomainError(409, 'duplicate-code', `Location ${code} exists already.`, { code: 'This code is in use.' });
}

export function toLocationJson(l: typeof locations.$inferSelect) {
	return { id: l.id, code: l.code, name: l.name, archived: l.archivedAt !== null };
}

/** Locations by code, with the number of units (all conditions) and of distinct parts in each. */
export async function listLocations(db: DbOrTx, opts: { includeArchived?: boolean } = {}) {
	const rows = await db
		.select({
			l: locations,
			units: sql<string>`coalesce(sum(${stock.quantity}), 0)`,
			parts: sql<string>`count(distinct case when ${stock.quantity} > 0 then ${stock.partId} end)`
		})
		.from(locations)
		.leftJoin(stock, eq(stock.locationId, locations.id))
		.where(opts.includeArchived ? undefined : isNull(locations.archivedAt))
		.groupBy(locations.id)
		.orderBy(asc(locations.code));
	return rows.map((r) => ({ ...toLocationJson(r.l), units: Number(r.units), parts: Number(r.parts) }));
}

export async function getLocation(db: DbOrTx, id: number) {
	const [l] = await db.select().from(locations).where(eq(locations.id, id));
	return l ?? null;
}

export async function createLocation(db: DbOrTx, input: unknown, actor: { id: number }) {
	const d = locationInputSchema.parse(input);
	return inTransaction(db, async (tx) => {
		await assertCodeFree(tx, d.code, null);
		const [{ id }] = await tx.insert(locations).values(d).$returningId();
		await recordAudit(tx, { actorId: actor.id, action: 'location.create', targetType: 'location', targetId: id, detail: d });
		return toLocationJson((await getLocation(tx, id))!);
	});
}

export async function updateLocation(db: DbOrTx, id: number, input: unknown, actor: { id: number }) {
	const d = locationInputSchema.parse(input);
	return inTransaction(db, async (tx) => {
		if (!(await getLocation(tx, id))) throw new DomainError(404, 'not-found', `There is no location ${id}.`);
		await assertCodeFree(tx, d.code, id);
		await tx.update(locations).set(d).where(eq(locations.id, id));
		await recordAudit(tx, { actorId: actor.id, action: 'location.update', targetType: 'location', targetId: id, detail: d });
		return toLocationJson((await getLocation(tx, id))!);
	});
}

/** Archives an empty location (409 while it holds any unit), or restores it. */
export async function setLocationArchived(db: DbOrTx, id: number, archived: boolean, actor: { id: number }) {
	return inTransaction(db, async (tx) => {
		const [l] = await tx.select().from(locations).where(eq(locations.id, id)).for('update');
		if (!l) throw new DomainError(404, 'not-found', `There is no location ${id}.`);
		if (archived) {
			const [held] = await tx
				.select({ n: sql<string>`coalesce(sum(${stock.quantity}), 0)` })
				.from(stock)
				.where(and(eq(stock.locationId, id), gt(stock.quantity, 0)));
			if (Number(held.n) > 0) throw new DomainError(409, 'location-not-empty', `${l.code} still holds ${held.n} units: move them first.`);
		}
		await tx.update(locations).set({ archivedAt: archived ? new Date() : null }).where(eq(locations.id, id));
		await recordAudit(tx, { actorId: actor.id, action: archived ? 'location.archive' : 'location.restore', targetType: 'location', targetId: id });
		return toLocationJson((await getLocation(tx, id))!);
	});
}

/** Stock rows (quantity > 0) with part data, by location code, then SKU; optionally of one location or one part. */
export async function stockRows(db: DbOrTx, filter: { locationId?: number; partId?: number } = {}) {
	const conds = [gt(stock.quantity, 0)];
	if (filter.locationId) conds.push(eq(stock.locationId, filter.locationId));
	if (filter.partId) conds.push(eq(stock.partId, filter.partId));
	const rows = await db
		.select({
			partId: stock.partId,
			sku: parts.sku,
			name: parts.name,
			eflMm: parts.paraxialEflMm,
			locationId: stock.locationId,
			code: locations.code,
			locationName: locations.name,
			condition: stock.condition,
			quantity: stock.quantity
		})
		.from(stock)
		.innerJoin(parts, eq(parts.id, stock.partId))
		.innerJoin(locations, eq(locations.id, stock.locationId))
		.where(and(...conds))
		.orderBy(asc(locations.code), asc(parts.sku), asc(stock.condition))
		.limit(5000);
	return rows;
}

/**
 * The part's drawer: the (not archived) location holding most of its units now, else the one it was
 * last received into (a part out of stock still has its place); null for a part never stocked.
 */
export async function homeLocationOf(db: DbOrTx, partId: number): Promise<number | null> {
	const [held] = await db
		.select({ id: stock.locationId, q: sql<string>`sum(${stock.quantity})` })
		.from(stock)
		.innerJoin(locations, eq(locations.id, stock.locationId))
		.where(and(eq(stock.partId, partId), gt(stock.quantity, 0), isNull(locations.archivedAt)))
		.groupBy(stock.locationId)
		.orderBy(desc(sql`sum(${stock.quantity})`), asc(stock.locationId))
		.limit(1);
	if (held) return held.id;
	const [last] = await db
		.select({ id: movements.toLocationId })
		.from(movements)
		.innerJoin(locations, eq(locations.id, movements.toLocationId))
		.where(and(eq(movements.partId, partId), isNull(locations.archivedAt)))
		.orderBy(desc(movements.at), desc(movements.id))
		.limit(1);
	return last?.id ?? null;
}
