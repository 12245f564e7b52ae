/**
 * Reservations: units of a part held for a project until a date. Active reservations whose
 * `until` has passed stop counting (no job needed: every query compares with the database's clock
 * through the one rule in `active-reservation.ts`).
 * available = usable on hand − active unexpired reservations (availability.ts).
 */
import { and, desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { dateInput, text } from '$lib/input';
import type { DbOrTx, Tx } from '$lib/server/db';
import { parts, projects, reservations, users } from '$lib/server/db/schema';
import type { Role } from '$lib/server/db/schema';
import { DomainError } from '$lib/server/errors';
import { changeStock } from './version';
import { totalsOf } from './availability';
import { inSet, RESERVATION_KEEPERS } from '$lib/roles';
import { activeReservation, isActiveNow } from './active-reservation';

const MAX_DAYS = 366;

/** `GET /reservations` filters: `?partId=`, `?mine=true`, `?active=true`. */
export const reservationQuerySchema = z
	.object({
		partId: z.coerce.number().int().positive().optional(),
		mine: z.enum(['true', 'false']).optional(),
		active: z.enum(['true', 'false']).optional()
	})
	.strict();

export const reservationInputSchema = z
	.object({
		partId: z.number({ error: 'Choose a part.' }).int().positive(),
		quantity: z.number({ error: 'Enter a number of units.' }).int('Whole units only.').min(1, 'At least 1 unit.').max(10_000),
		until: dateInput('Enter a date.')
			.refine((d) => d.getTime() > Date.now(), 'Choose a date in the future.')
			.refine((d) => d.getTime() <= Date.now() + MAX_DAYS * 86_400_000, `At most ${MAX_DAYS} days ahead.`),
		projectId: z.number().int().positive().nullable().optional(),
		setupId: z.number().int().positive().nullable().optional(),
		note: text().trim().max(2000).nullable().optional()
	})
	.strict();
export type ReservationInput = z.infer<typeof reservationInputSchema>;

type ReserveInput = { partId: number; quantity: number; until: Date | string; projectId?: number | null; setupId?: number | null; note?: string | null; userId: number };

/**
 * Reserves units inside the caller's transaction `tx` (the solver reserves all parts of a
 * setup in one transaction this way). Locks the part row, so concurrent reservations and
 * issues of the same part are serialised. Throws DomainError 409 'insufficient-stock' when
 * fewer units are available, 404 for an unknown part, 400 for bad input.
 */
export async function reserve(tx: Tx, input: ReserveInput) {
	return changeStock(tx, (t) => reserveUnits(t, input));
}

async function reserveUnits(tx: Tx, input: ReserveInput) {
	const { userId, ...rest } = input;
	const d = reservationInputSchema.parse(rest);
	const [part] = await tx.select({ id: parts.id, sku: parts.sku, archivedAt: parts.archivedAt }).from(parts).where(eq(parts.id, d.partId)).for('update');
	if (!part) throw new DomainError(404, 'not-found', `There is no part ${d.partId}.`, { partId: 'No such part.' });
	if (part.archivedAt) throw new DomainError(409, 'part-archived', `${part.sku} is archived.`);
	if (d.projectId != null) {
		const [p] = await tx.select({ id: projects.id }).from(projects).where(eq(projects.id, d.projectId));
		if (!p) throw new DomainError(400, 'invalid-input', 'No such project.', { projectId: 'No such project.' });
	}
	const totals = await totalsOf(tx, d.partId);
	if (totals.available < d.quantity) {
		const message = `Only ${totals.available} unit${totals.available === 1 ? '' : 's'} of ${part.sku} ${totals.available === 1 ? 'is' : 'are'} available (${totals.onHand} on hand, ${totals.reserved} reserved).`;
		throw new DomainError(409, 'insufficient-stock', message, { quantity: message });
	}
	const [{ id }] = await tx
		.insert(reservations)
		.values({ partId: d.partId, userId, projectId: d.projectId ?? null, setupId: d.setupId ?? null, quantity: d.quantity, until: d.until, note: d.note || null })
		.$returningId();
	return (await reservationRows(tx, { id }))[0];
}

/** `reserve` in a transaction of its own. */
export async function createReservation(db: DbOrTx, input: unknown, actor: { id: number }) {
	const body = z.object({}).passthrough().parse(input);
	return changeStock(db, (tx) => reserveUnits(tx, { ...(body as ReservationInput), userId: actor.id }));
}

/**
 * Releases a reservation. Its owner may release it; stock editors (admin, stockroom) may
 * release anyone's. Anyone else gets 404, as if it did not exist.
 */
export async function releaseReservation(db: DbOrTx, id: number, actor: { id: number; role: Role }) {
	return changeStock(db, async (tx) => {
		// Lock order (the one used by every stock path): the part row first, then its reservations.
		// Locking the reservation first deadlocked against an issue of the same part.
		const [found] = await tx.select({ partId: reservations.partId }).from(reservations).where(eq(reservations.id, id));
		if (found) await tx.select({ id: parts.id }).from(parts).where(eq(parts.id, found.partId)).for('update');
		const [r] = await tx.select().from(reservations).where(eq(reservations.id, id)).for('update');
		const mayRelease = r && (r.userId === actor.id || inSet(actor.role, RESERVATION_KEEPERS));
		if (!r || !mayRelease) throw new DomainError(404, 'not-found', `There is no reservation ${id} of yours.`);
		if (r.status !== 'active') throw new DomainError(409, 'not-active', `Reservation ${id} is already ${r.status}.`);
		await tx.update(reservations).set({ status: 'released' }).where(eq(reservations.id, id));
		return { id, status: 'released' as const };
	});
}

/** Reservations with part, user and project, newest first; `state` says active / expired / released / fulfilled. */
export async function reservationRows(db: DbOrTx, filter: { id?: number; partId?: number; userId?: number; activeOnly?: boolean }) {
	const conds = [];
	if (filter.id) conds.push(eq(reservations.id, filter.id));
	if (filter.partId) conds.push(eq(reservations.partId, filter.partId));
	if (filter.userId) conds.push(eq(reservations.userId, filter.userId));
	if (filter.activeOnly) conds.push(activeReservation);
	const rows = await db
		.select({ r: reservations, activeNow: isActiveNow, sku: parts.sku, userName: users.name, projectCode: projects.code })
		.from(reservations)
		.innerJoin(parts, eq(parts.id, reservations.partId))
		.innerJoin(users, eq(users.id, reservations.userId))
		.leftJoin(projects, eq(projects.id, reservations.projectId))
		.where(and(...conds))
		.orderBy(desc(reservations.createdAt), desc(reservations.id))
		.limit(500);
	return rows.map(({ r, activeNow, sku, userName, projectCode }) => ({
		id: r.id,
		partId: r.partId,
		sku,
		userId: r.userId,
		userName,
		projectId: r.projectId,
		projectCode,
		setupId: r.setupId,
		quantity: r.quantity,
		until: r.until.toISOString(),
		status: r.status,
		state: r.status === 'active' && !activeNow ? ('expired' as const) : r.status,
		note: r.note,
		createdAt: r.createdAt.toISOString()
	}));
}
