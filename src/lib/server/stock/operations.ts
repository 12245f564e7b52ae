/**
 * Stock operations and the ledger. Each operation runs in one transaction that
 *   1. locks the part row (`SELECT … FOR UPDATE`): all stock changes of one part are
 *      serialised, so the reservation check below cannot race;
 *   2. takes units out with a conditional `UPDATE stock SET quantity = quantity − n
 *      WHERE … AND quantity >= n` (0 rows → 409 'insufficient-stock'), and puts units in
 *      with `INSERT … ON DUPLICATE KEY UPDATE quantity = quantity + n`;
 *   3. appends exactly one movement to the ledger and bumps the stock version.
 * The stock quantity column is unsigned as a last net: a negative count is impossible.
 *
 * Reservations (decided here, documented in DEVELOPERS.md): an **issue** may not take units
 * that others reserved: after the issue, usable on hand must still cover every active
 * reservation of other people. The issuer's own active reservations of the part are
 * fulfilled first (oldest first, or only the one named by `reservationId`). Scrap, adjust,
 * condition changes and moves record what physically happened and are never refused for
 * reservations; available is then shown as 0 until someone releases a reservation.
 */
import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import { z } from 'zod';
import { text } from '$lib/input';
import type { DbOrTx, Tx } from '$lib/server/db';
import {
	CONDITIONS,
	locations,
	movements,
	parts,
	projects,
	reservations,
	stock,
	users,
	type Condition,
	type MovementKind
} from '$lib/server/db/schema';
import { Conflict, DomainError } from '$lib/server/errors';
import { changeStock } from './version';
import { activeReservation } from './active-reservation';

export class InsufficientStock extends Conflict {
	constructor(message: string) {
		super('insufficient-stock', message, { quantity: message });
	}
}

const id = z.number({ error: 'Choose one.' }).int().positive();
const quantity = z.number({ error: 'Enter a number of units.' }).int('Whole units only.').min(1, 'At least 1 unit.').max(100_000, 'At most 100000 units at once.');
const note = text().trim().max(2000, 'At most 2000 characters.').nullable().optional();
const condition = z.enum(CONDITIONS, { error: 'Choose usable, quarantine or damaged.' });

/** `GET /parts/:id/movements` paging. */
export const movementQuerySchema = z
	.object({ limit: z.coerce.number().int().min(1).max(500).default(100), offset: z.coerce.number().int().min(0).default(0) })
	.strict();

export const receiveSchema = z.object({ partId: id, quantity, locationId: id, condition: condition.default('usable'), note }).strict();
export const moveSchema = z
	.object({ partId: id, quantity, fromLocationId: id, toLocationId: id, condition: condition.default('usable'), note })
	.strict()
	.refine((v) => v.fromLocationId !== v.toLocationId, { message: 'Choose a different destination.', path: ['toLocationId'] });
export const issueSchema = z
	.object({
		partId: id,
		quantity,
		locationId: id,
		issuedTo: text().trim().max(160).nullable().optional(),
		projectId: id.nullable().optional(),
		reservationId: id.nullable().optional(),
		note
	})
	.strict();
export const returnSchema = z
	.object({
		partId: id,
		quantity,
		locationId: id,
		condition: condition.default('usable'),
		issuedTo: text().trim().max(160).nullable().optional(),
		projectId: id.nullable().optional(),
		note
	})
	.strict();
export const adjustSchema = z
	.object({
		partId: id,
		locationId: id,
		condition: condition.default('usable'),
		/** Signed change: + found units, − missing units. */
		delta: z.number({ error: 'Enter the change in units, e.g. -2 or 3.' }).int('Whole units only.').refine((v) => v !== 0 && Math.abs(v) <= 100_000, 'A non-zero change of at most 100000 units.'),
		reason: text().trim().min(3, 'Say why (at least 3 characters).').max(200),
		note
	})
	.strict();
export const scrapSchema = z
	.object({ partId: id, quantity, locationId: id, condition: condition.default('damaged'), reason: text().trim().max(200).nullable().optional(), note })
	.strict();
export const conditionSchema = z
	.object({ partId: id, quantity, locationId: id, from: condition, to: condition, note })
	.strict()
	.refine((v) => v.from !== v.to, { message: 'Choose a different condition.', path: ['to'] });

export interface StockActor {
	id: number;
}

/** The movement as the API returns it. */
export type MovementJson = Awaited<ReturnType<typeof movementJson>>;

async function lockPart(tx: Tx, partId: number) {
	const [part] = await tx.select({ id: parts.id, sku: parts.sku, archivedAt: parts.archivedAt }).from(parts).where(eq(parts.id, partId)).for('update');
	if (!part) throw new DomainError(404, 'not-found', `There is no part ${partId}.`, { partId: 'No such part.' });
	return part;
}

async function checkLocation(tx: Tx, locationId: number, field: string, forIncoming: boolean) {
	const [loc] = await tx.select().from(locations).where(eq(locations.id, locationId));
	if (!loc) throw new DomainError(400, 'invalid-input', 'No such location.', { [field]: 'No such location.' });
	if (forIncoming && loc.archivedAt) throw new DomainError(409, 'location-archived', `Location ${loc.code} is archived.`, { [field]: 'This location is archived.' });
	return loc;
}

async function takeOut(tx: Tx, partId: number, locationId: number, cond: Condition, n: number, what: { sku: string; code: string }) {
	const [res] = await tx
		.update(stock)
		.set({ quantity: sql`${stock.quantity} - ${n}` })
		.where(and(eq(stock.partId, partId), eq(stock.locationId, locationId), eq(stock.condition, cond), sql`${stock.quantity} >= ${n}`));
	if (res.affectedRows !== 1) {
		const [row] = await tx
			.select({ q: stock.quantity })
			.from(stock)
			.where(and(eq(stock.partId, partId), eq(stock.locationId, locationId), eq(stock.condition, cond)));
		const have = row?.q ?? 0;
		throw new InsufficientStock(
			`Not enough stock: ${what.code} holds ${have} ${cond} unit${have === 1 ? '' : 's'} of ${what.sku}, ${n} requested.`
		);
	}
}

async function putIn(tx: Tx, partId: number, locationId: number, cond: Condition, n: number) {
	await tx
		.insert(stock)
		.values({ partId, locationId, condition: cond, quantity: n })
		.onDuplicateKeyUpdate({ set: { quantity: sql`${stock.quantity} + ${n}` } });
}

async function record(
	tx: Tx,
	m: {
		kind: MovementKind;
		partId: number;
		quantity: number;
		from?: { locationId: number; condition: Condition };
		to?: { locationId: number; condition: Condition };
		userId: number;
		issuedTo?: string | null;
		projectId?: number | null;
		reason?: string | null;
		note?: string | null;
		refs?: unknown;
	}
) {
	const [{ id: movementId }] = await tx
		.insert(movements)
		.values({
			kind: m.kind,
			partId: m.partId,
			quantity: m.quantity,
			fromLocationId: m.from?.locationId ?? null,
			fromCondition: m.from?.condition ?? null,
			toLocationId: m.to?.locationId ?? null,
			toCondition: m.to?.condition ?? null,
			userId: m.userId,
			issuedTo: m.issuedTo || null,
			projectId: m.projectId ?? null,
			reason: m.reason || null,
			note: m.note || null,
			refs: m.refs ?? null,
			at: new Date()
		})
		.$returningId();
	const [row] = await movementRows(tx, { ids: [movementId] });
	return row;
}

async function checkProject(tx: Tx, projectId: number | null | undefined) {
	if (projectId == null) return;
	const [p] = await tx.select({ id: projects.id }).from(projects).where(eq(projects.id, projectId));
	if (!p) throw new DomainError(400, 'invalid-input', 'No such project.', { projectId: 'No such project.' });
}

/** Receives units into a location (new stock from a supplier, or found units). */
export async function receive(db: DbOrTx, input: unknown, actor: StockActor) {
	const d = receiveSchema.parse(input);
	return changeStock(db, async (tx) => {
		const part = await lockPart(tx, d.partId);
		if (part.archivedAt) throw new DomainError(409, 'part-archived', `${part.sku} is archived: restore it before receiving stock.`);
		await checkLocation(tx, d.locationId, 'locationId', true);
		await putIn(tx, d.partId, d.locationId, d.condition, d.quantity);
		return record(tx, { kind: 'receive', partId: d.partId, quantity: d.quantity, to: { locationId: d.locationId, condition: d.condition }, userId: actor.id, note: d.note });
	});
}

/** Moves units between locations, keeping their condition. */
export async function move(db: DbOrTx, input: unknown, actor: StockActor) {
	const d = moveSchema.parse(input);
	return changeStock(db, async (tx) => {
		const part = await lockPart(tx, d.partId);
		const from = await checkLocation(tx, d.fromLocationId, 'fromLocationId', false);
		await checkLocation(tx, d.toLocationId, 'toLocationId', true);
		await takeOut(tx, d.partId, d.fromLocationId, d.condition, d.quantity, { sku: part.sku, code: from.code });
		await putIn(tx, d.partId, d.toLocationId, d.condition, d.quantity);
		return record(tx, {
			kind: 'move',
			partId: d.partId,
			quantity: d.quantity,
			from: { locationId: d.fromLocationId, condition: d.condition },
			to: { locationId: d.toLocationId, condition: d.condition },
			userId: actor.id,
			note: d.note
		});
	});
}

/** Usable units and the active reservations of a part, inside the locked transaction. */
async function usableAndReservations(tx: Tx, partId: number) {
	const [s] = await tx
		.select({ q: sql<string>`coalesce(sum(${stock.quantity}), 0)` })
		.from(stock)
		.where(and(eq(stock.partId, partId), eq(stock.condition, 'usable')));
	const active = await tx
		.select()
		.from(reservations)
		.where(and(eq(reservations.partId, partId), activeReservation))
		.orderBy(asc(reservations.createdAt), asc(reservations.id));
	return { usable: Number(s.q), active };
}

/** Issues usable units to a person or project; never takes units others reserved (see the module note). */
export async function issue(db: DbOrTx, input: unknown, actor: StockActor) {
	const d = issueSchema.parse(input);
	return changeStock(db, async (tx) => {
		const part = await lockPart(tx, d.partId);
		const loc = await checkLocation(tx, d.locationId, 'locationId', false);
		await checkProject(tx, d.projectId);
		const { usable, active } = await usableAndReservations(tx, d.partId);
		if (d.reservationId != null && !active.some((r) => r.id === d.reservationId && r.userId === actor.id)) {
			throw new DomainError(400, 'invalid-input', 'That reservation is not an active reservation of yours for this part.', {
				reservationId: 'Not one of your active reservations of this part.'
			});
		}
		// The part row is locked, so this check and the take-out below cannot interleave with another issue.
		const reservedByOthers = active.filter((r) => r.userId !== actor.id).reduce((sum, r) => sum + r.quantity, 0);
		if (usable - d.quantity < reservedByOthers) {
			const free = Math.max(0, usable - reservedByOthers);
			throw new InsufficientStock(
				`Not enough unreserved stock of ${part.sku}: ${usable} usable on hand, ${reservedByOthers} reserved by others, so at most ${free} can be issued now.`
			);
		}
		await takeOut(tx, d.partId, d.locationId, 'usable', d.quantity, { sku: part.sku, code: loc.code });
		// Fulfil the issuer's own reservations with the issued units, oldest first.
		const mine = active.filter((r) => r.userId === actor.id && (d.reservationId == null || r.id === d.reservationId));
		let left = d.quantity;
		const fulfilled: number[] = [];
		for (const r of mine) {
			if (left <= 0) break;
			const used = Math.min(left, r.quantity);
			left -= used;
			fulfilled.push(r.id);
			if (used === r.quantity) await tx.update(reservations).set({ status: 'fulfilled' }).where(eq(reservations.id, r.id));
			else await tx.update(reservations).set({ quantity: r.quantity - used }).where(eq(reservations.id, r.id));
		}
		return record(tx, {
			kind: 'issue',
			partId: d.partId,
			quantity: d.quantity,
			from: { locationId: d.locationId, condition: 'usable' },
			userId: actor.id,
			issuedTo: d.issuedTo,
			projectId: d.projectId,
			note: d.note,
			refs: fulfilled.length ? { reservations: fulfilled } : null
		});
	});
}

/** Returns issued units into a location (usable, or quarantine/damaged when they came back hurt). */
export async function returnStock(db: DbOrTx, input: unknown, actor: StockActor) {
	const d = returnSchema.parse(input);
	return changeStock(db, async (tx) => {
		await lockPart(tx, d.partId);
		await checkLocation(tx, d.locationId, 'locationId', true);
		await checkProject(tx, d.projectId);
		// Only units that went out can come back: a return beyond them would make stock out of nothing.
		const [out] = await tx
			.select({
				issued: sql<string>`coalesce(sum(case when ${movements.kind} = 'issue' then ${movements.quantity} else 0 end), 0)`,
				returned: sql<string>`coalesce(sum(case when ${movements.kind} = 'return' then ${movements.quantity} else 0 end), 0)`
			})
			.from(movements)
			.where(eq(movements.partId, d.partId));
		const outstanding = Number(out.issued) - Number(out.returned);
		if (d.quantity > outstanding) {
			throw new InsufficientStock(
				outstanding > 0
					? `Only ${outstanding} unit${outstanding === 1 ? ' is' : 's are'} out (issued and not returned yet), so at most ${outstanding} can come back. Units that were never issued are received, or counted in with a correction.`
					: 'No unit of this part is out (issued and not returned yet), so none can come back. Units that were never issued are received, or counted in with a correction.'
			);
		}
		await putIn(tx, d.partId, d.locationId, d.condition, d.quantity);
		return record(tx, {
			kind: 'return',
			partId: d.partId,
			quantity: d.quantity,
			to: { locationId: d.locationId, condition: d.condition },
			userId: actor.id,
			issuedTo: d.issuedTo,
			projectId: d.projectId,
			note: d.note
		});
	});
}

/** Corrects a count (stock-taking): + found units, − missing units, always with a reason. */
export async function adjust(db: DbOrTx, input: unknown, actor: StockActor) {
	const d = adjustSchema.parse(input);
	return changeStock(db, async (tx) => {
		const part = await lockPart(tx, d.partId);
		const loc = await checkLocation(tx, d.locationId, 'locationId', d.delta > 0);
		const n = Math.abs(d.delta);
		const bucket = { locationId: d.locationId, condition: d.condition };
		if (d.delta < 0) await takeOut(tx, d.partId, d.locationId, d.condition, n, { sku: part.sku, code: loc.code });
		else await putIn(tx, d.partId, d.locationId, d.condition, n);
		return record(tx, {
			kind: 'adjust',
			partId: d.partId,
			quantity: n,
			...(d.delta < 0 ? { from: bucket } : { to: bucket }),
			userId: actor.id,
			reason: d.reason,
			note: d.note
		});
	});
}

/** Scraps units (broken, scratched beyond use): they leave the stock for good. */
export async function scrap(db: DbOrTx, input: unknown, actor: StockActor) {
	const d = scrapSchema.parse(input);
	return changeStock(db, async (tx) => {
		const part = await lockPart(tx, d.partId);
		const loc = await checkLocation(tx, d.locationId, 'locationId', false);
		await takeOut(tx, d.partId, d.locationId, d.condition, d.quantity, { sku: part.sku, code: loc.code });
		return record(tx, {
			kind: 'scrap',
			partId: d.partId,
			quantity: d.quantity,
			from: { locationId: d.locationId, condition: d.condition },
			userId: actor.id,
			reason: d.reason,
			note: d.note
		});
	});
}

/** Changes the condition of units in place (usable ↔ quarantine ↔ damaged). */
export async function changeCondition(db: DbOrTx, input: unknown, actor: StockActor) {
	const d = conditionSchema.parse(input);
	return changeStock(db, async (tx) => {
		const part = await lockPart(tx, d.partId);
		const loc = await checkLocation(tx, d.locationId, 'locationId', false);
		await takeOut(tx, d.partId, d.locationId, d.from, d.quantity, { sku: part.sku, code: loc.code });
		await putIn(tx, d.partId, d.locationId, d.to, d.quantity);
		return record(tx, {
			kind: 'condition',
			partId: d.partId,
			quantity: d.quantity,
			from: { locationId: d.locationId, condition: d.from },
			to: { locationId: d.locationId, condition: d.to },
			userId: actor.id,
			note: d.note
		});
	});
}

/** The operations by their API name (`POST /api/v1/stock/<name>`). */
export const OPERATIONS = {
	receive,
	move,
	issue,
	return: returnStock,
	adjust,
	scrap,
	condition: changeCondition
} as const;
export type OperationName = keyof typeof OPERATIONS;

const fromLoc = sql`fl.code`;
const toLoc = sql`tl.code`;

/** Ledger rows with names and location codes, newest first. */
export async function movementRows(db: DbOrTx, filter: { ids?: number[]; partId?: number; limit?: number; offset?: number }) {
	const conds = [];
	if (filter.ids) conds.push(inArray(movements.id, filter.ids));
	if (filter.partId) conds.push(eq(movements.partId, filter.partId));
	const rows = await db
		.select({
			m: movements,
			sku: parts.sku,
			userName: users.name,
			fromCode: sql<string | null>`${fromLoc}`,
			toCode: sql<string | null>`${toLoc}`,
			projectCode: projects.code
		})
		.from(movements)
		.innerJoin(parts, eq(parts.id, movements.partId))
		.innerJoin(users, eq(users.id, movements.userId))
		.leftJoin(sql`locations fl`, sql`fl.id = ${movements.fromLocationId}`)
		.leftJoin(sql`locations tl`, sql`tl.id = ${movements.toLocationId}`)
		.leftJoin(projects, eq(projects.id, movements.projectId))
		.where(and(...conds))
		.orderBy(desc(movements.at), desc(movements.id))
		.limit(filter.limit ?? 200)
		.offset(filter.offset ?? 0);
	return rows.map(movementJson);
}

function movementJson(r: {
	m: typeof movements.$inferSelect;
	sku: string;
	userName: string;
	fromCode: string | null;
	toCode: string | null;
	projectCode: string | null;
}) {
	const m = r.m;
	return {
		id: m.id,
		kind: m.kind,
		partId: m.partId,
		sku: r.sku,
		quantity: m.quantity,
		from: m.fromLocationId ? { locationId: m.fromLocationId, code: r.fromCode, condition: m.fromCondition } : null,
		to: m.toLocationId ? { locationId: m.toLocationId, code: r.toCode, condition: m.toCondition } : null,
		userId: m.userId,
		userName: r.userName,
		issuedTo: m.issuedTo,
		projectId: m.projectId,
		projectCode: r.projectCode,
		reason: m.reason,
		note: m.note,
		refs: m.refs,
		at: m.at.toISOString()
	};
}
