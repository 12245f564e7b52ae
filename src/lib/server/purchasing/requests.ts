/**
 * Purchase requests: create, edit, step through the states of states.ts, receive goods.
 * Every change runs in one transaction with its event row (who, when, from → to, note).
 * Receiving calls the stock service's `receive` inside the same transaction, so the ledger
 * movement, the request's received quantity and the event commit together or not at all;
 * the stock service stays the only writer of the ledger.
 */
import { and, asc, desc, eq, inArray, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { text } from '$lib/input';
import type { DbOrTx, Tx } from '$lib/server/db';
import { inTransaction } from '$lib/server/db/transaction';
import {
	REQUEST_STATUSES,
	locations,
	parts,
	purchaseRequestEvents,
	purchaseRequests,
	reservations,
	suppliers,
	users,
	type RequestStatus,
	type Role
} from '$lib/server/db/schema';
import { Conflict, DomainError } from '$lib/server/errors';
import { receive as receiveStock } from '$lib/server/stock/operations';
import { totalsOf } from '$lib/server/stock/availability';
import { EDITABLE, NAMED_STEPS, RECEIVABLE, STATUS_LABELS, canStep, statusAfterReceipt } from './states';
import { isWholeCents, toMajor, toMinor } from '$lib/money';
import { PURCHASERS, REQUEST_VIEWERS } from '$lib/roles';
import { activeReservation } from '$lib/server/stock/active-reservation';

export interface RequestActor {
	id: number;
	role: Role;
}


const quantity = z.number({ error: 'Enter a number of units.' }).int('Whole units only.').min(1, 'At least 1 unit.').max(100_000, 'At most 100000 units.');
const note = text().trim().max(2000, 'At most 2000 characters.').nullable().optional();
/** Currency units (38.50), at most two decimals; stored as cents. */
const unitPrice = z
	.number({ error: 'Enter the price in currency units, e.g. 38.50.' })
	.min(0, 'The price cannot be negative.')
	.max(1e7, 'At most 10000000.')
	.refine(isWholeCents, 'At most two decimals, e.g. 38.50.')
	.nullable()
	.optional();
const id = z.number({ error: 'Choose one.' }).int().positive();

export const createRequestSchema = z
	.object({
		partId: id,
		quantity,
		status: z.enum(['draft', 'requested'], { error: 'A new request is a draft or requested.' }).default('draft'),
		unitPrice,
		note
	})
	.strict();
export type CreateRequestInput = z.input<typeof createRequestSchema>;

export const receiveInputSchema = z
	.object({ quantity, locationId: id, condition: z.enum(['usable', 'quarantine', 'damaged']).default('usable') })
	.strict();

export const patchRequestSchema = z
	.object({
		status: z.enum(REQUEST_STATUSES, { error: `Status is one of ${REQUEST_STATUSES.join(', ')}.` }).optional(),
		quantity: quantity.optional(),
		unitPrice,
		orderReference: text().trim().max(80, 'At most 80 characters.').nullable().optional(),
		receive: receiveInputSchema.optional(),
		note
	})
	.strict()
	.refine((v) => !(v.receive && (v.status || v.quantity !== undefined || v.unitPrice !== undefined || v.orderReference !== undefined)), {
		message: 'Receive goods on their own, without other changes.',
		path: ['receive']
	})
	.refine((v) => v.status || v.receive || v.quantity !== undefined || v.unitPrice !== undefined || v.orderReference !== undefined || v.note, {
		message: 'Nothing to change: give a status, quantity, unitPrice, orderReference, receive or note.',
		path: ['_']
	});
export type PatchRequestInput = z.input<typeof patchRequestSchema>;

export class IllegalTransition extends Conflict {
	constructor(from: RequestStatus, to: RequestStatus) {
		const allowed = NAMED_STEPS[from];
		super(
			'illegal-transition',
			`A request that is ${STATUS_LABELS[from].toLowerCase()} cannot become ${STATUS_LABELS[to].toLowerCase()}` +
				(to === 'received' || to === 'partly-received' ? ': receive the goods instead.' : allowed.length ? ` (allowed: ${allowed.join(', ')}).` : ' (no further steps).'),
			{ status: `Not allowed from ${from}.` }
		);
	}
}

const EDIT_WORDS: Record<string, (v: unknown) => string> = {
	quantity: (v) => `quantity ${v}`,
	unitPriceMinor: (v) => (v == null ? 'no price' : `unit price ${(Number(v) / 100).toFixed(2)}`),
	orderReference: (v) => (v ? `order reference ${v}` : 'no order reference')
};

/** "Set quantity 5, order reference QG-1." for the history, or null when nothing but the status changed. */
function describeEdits(edits: Record<string, unknown>): string | null {
	const parts = Object.entries(edits)
		.filter(([k]) => k in EDIT_WORDS)
		.map(([k, v]) => EDIT_WORDS[k](v));
	return parts.length ? `Set ${parts.join(', ')}.` : null;
}

const notFound = (requestId: number) => new DomainError(404, 'not-found', `There is no purchase request ${requestId}.`);

async function recordEvent(
	tx: Tx,
	e: { requestId: number; userId: number; from: RequestStatus | null; to: RequestStatus; quantity?: number; locationId?: number; movementId?: number; note?: string | null }
) {
	await tx.insert(purchaseRequestEvents).values({
		requestId: e.requestId,
		userId: e.userId,
		fromStatus: e.from,
		toStatus: e.to,
		quantity: e.quantity ?? null,
		locationId: e.locationId ?? null,
		movementId: e.movementId ?? null,
		note: e.note || null,
		at: new Date()
	});
}

function assertManager(actor: RequestActor) {
	if (!PURCHASERS.includes(actor.role)) throw new DomainError(403, 'forbidden', 'Only purchasers change purchase requests; the stockroom may receive goods.');
}

/** Creates requests for several parts in one transaction (the reorder board's "create requests"). */
export async function createRequests(db: DbOrTx, inputs: readonly unknown[], actor: RequestActor): Promise<number[]> {
	assertManager(actor);
	const list = z.array(createRequestSchema).min(1, 'Choose at least one part.').max(500, 'At most 500 requests at once.').parse(inputs);
	return inTransaction(db, async (tx) => {
		const ids: number[] = [];
		for (const d of list) {
			const [part] = await tx.select().from(parts).where(eq(parts.id, d.partId));
			if (!part) throw new DomainError(400, 'invalid-input', `There is no part ${d.partId}.`, { partId: 'No such part.' });
			if (part.archivedAt) throw new DomainError(409, 'part-archived', `${part.sku} is archived: restore it before ordering it.`, { partId: 'This part is archived.' });
			const [{ id: requestId }] = await tx
				.insert(purchaseRequests)
				.values({
					partId: part.id,
					supplierId: part.supplierId,
					status: d.status,
					quantity: d.quantity,
					unitPriceMinor: d.unitPrice === undefined ? part.unitPriceMinor : d.unitPrice === null ? null : toMinor(d.unitPrice),
					currency: part.currency,
					leadTimeDays: part.leadTimeDays,
					note: d.note || null,
					createdBy: actor.id
				})
				.$returningId();
			await recordEvent(tx, { requestId, userId: actor.id, from: null, to: d.status, quantity: d.quantity, note: d.note });
			ids.push(requestId);
		}
		return ids;
	});
}

/** Creates one request. */
export async function createRequest(db: DbOrTx, input: unknown, actor: RequestActor): Promise<number> {
	return (await createRequests(db, [input], actor))[0];
}

/** A reservation that was waiting for units and is (more) covered after a receipt. */
export interface CoveredReservation {
	reservationId: number;
	userId: number;
	email: string;
	name: string;
	quantity: number;
	until: Date;
	fully: boolean;
}

export interface PatchResult {
	id: number;
	status: RequestStatus;
	/** Set when goods were received. */
	receipt?: { movementId: number; quantity: number; partId: number; sku: string; covered: CoveredReservation[] };
}

/**
 * Reservations of the part that the usable units on hand did not cover before the receipt and
 * cover (at least partly) after it. Reservations are served oldest first.
 */
async function newlyCovered(tx: Tx, partId: number, onHandBefore: number, onHandAfter: number): Promise<CoveredReservation[]> {
	const active = await tx
		.select({ r: reservations, email: users.email, name: users.name })
		.from(reservations)
		.innerJoin(users, eq(users.id, reservations.userId))
		.where(and(eq(reservations.partId, partId), activeReservation))
		.orderBy(asc(reservations.createdAt), asc(reservations.id));
	const out: CoveredReservation[] = [];
	let before = 0;
	for (const { r, email, name } of active) {
		const start = before;
		const end = before + r.quantity;
		before = end;
		const waitingBefore = end > onHandBefore;
		const moreCoveredNow = onHandAfter > Math.max(start, onHandBefore);
		if (waitingBefore && moreCoveredNow) {
			out.push({ reservationId: r.id, userId: r.userId, email, name, quantity: r.quantity, until: r.until, fully: end <= onHandAfter });
		}
	}
	return out;
}

/** Edits, steps or receives one request (see patchRequestSchema). */
export async function patchRequest(db: DbOrTx, requestId: number, input: unknown, actor: RequestActor): Promise<PatchResult> {
	const d = patchRequestSchema.parse(input);
	if (!d.receive) assertManager(actor);
	else if (!REQUEST_VIEWERS.includes(actor.role)) throw new DomainError(403, 'forbidden', 'Your role may not receive goods.');
	return inTransaction(db, async (tx) => {
		const [req] = await tx.select().from(purchaseRequests).where(eq(purchaseRequests.id, requestId)).for('update');
		if (!req) throw notFound(requestId);

		if (d.receive) {
			if (!RECEIVABLE.includes(req.status)) {
				throw new DomainError(409, 'illegal-transition', `Goods can be received only on an ordered request; this one is ${STATUS_LABELS[req.status].toLowerCase()}.`, {
					receive: 'Mark the request ordered first.'
				});
			}
			const remaining = req.quantity - req.receivedQuantity;
			if (d.receive.quantity > remaining) {
				const msg = `At most ${remaining} unit${remaining === 1 ? '' : 's'} remain${remaining === 1 ? 's' : ''} on this request.`;
				throw new DomainError(400, 'invalid-input', msg, { 'receive.quantity': msg });
			}
			const movement = await receiveStock(
				tx,
				{ partId: req.partId, quantity: d.receive.quantity, locationId: d.receive.locationId, condition: d.receive.condition, note: d.note ? `Purchase request ${req.id}: ${d.note}` : `Purchase request ${req.id}` },
				{ id: actor.id }
			);
			const received = req.receivedQuantity + d.receive.quantity;
			const status = statusAfterReceipt(req.quantity, received);
			await tx.update(purchaseRequests).set({ receivedQuantity: received, status }).where(eq(purchaseRequests.id, req.id));
			await recordEvent(tx, {
				requestId: req.id,
				userId: actor.id,
				from: req.status,
				to: status,
				quantity: d.receive.quantity,
				locationId: d.receive.locationId,
				movementId: movement.id,
				note: d.note
			});
			let covered: CoveredReservation[] = [];
			if (d.receive.condition === 'usable') {
				const after = (await totalsOf(tx, req.partId)).onHand;
				covered = await newlyCovered(tx, req.partId, after - d.receive.quantity, after);
			}
			return { id: req.id, status, receipt: { movementId: movement.id, quantity: d.receive.quantity, partId: req.partId, sku: movement.sku, covered } };
		}

		const edits: Partial<typeof purchaseRequests.$inferInsert> = {};
		if (d.quantity !== undefined || d.unitPrice !== undefined) {
			if (!EDITABLE.includes(req.status)) {
				throw new DomainError(409, 'not-editable', `The quantity and price of a request that is ${STATUS_LABELS[req.status].toLowerCase()} cannot change.`, {
					quantity: 'Only drafts and requested requests can be edited.'
				});
			}
			if (d.quantity !== undefined) edits.quantity = d.quantity;
			if (d.unitPrice !== undefined) edits.unitPriceMinor = d.unitPrice === null ? null : toMinor(d.unitPrice);
		}
		if (d.orderReference !== undefined) {
			if (req.status === 'closed' || req.status === 'cancelled') {
				throw new DomainError(409, 'not-editable', `A ${req.status} request cannot change.`, { orderReference: 'This request is finished.' });
			}
			edits.orderReference = d.orderReference || null;
		}
		let status = req.status;
		if (d.status && d.status !== req.status) {
			if (!canStep(req.status, d.status)) throw new IllegalTransition(req.status, d.status);
			status = d.status;
			edits.status = status;
		} else if (d.status === req.status) {
			throw new IllegalTransition(req.status, d.status);
		}
		if (Object.keys(edits).length) await tx.update(purchaseRequests).set(edits).where(eq(purchaseRequests.id, req.id));
		await recordEvent(tx, {
			requestId: req.id,
			userId: actor.id,
			from: req.status,
			to: status,
			quantity: edits.quantity ?? undefined,
			note: d.note ?? describeEdits(edits)
		});
		return { id: req.id, status };
	});
}

export const listQuerySchema = z
	.object({
		status: z.enum(REQUEST_STATUSES).optional(),
		partId: z.coerce.number().int().positive().optional(),
		open: z.enum(['true', 'false']).optional()
	})
	.strict();

/** Requests with part, supplier and creator, newest change first. */
export async function listRequests(db: DbOrTx, filter: { ids?: number[]; status?: RequestStatus; partId?: number; statuses?: readonly RequestStatus[] } = {}) {
	const conds: SQL[] = [];
	if (filter.ids) conds.push(inArray(purchaseRequests.id, filter.ids.length ? filter.ids : [0]));
	if (filter.status) conds.push(eq(purchaseRequests.status, filter.status));
	if (filter.statuses) conds.push(inArray(purchaseRequests.status, [...filter.statuses]));
	if (filter.partId) conds.push(eq(purchaseRequests.partId, filter.partId));
	const rows = await db
		.select({ r: purchaseRequests, sku: parts.sku, partName: parts.name, supplier: suppliers.name, createdByName: users.name })
		.from(purchaseRequests)
		.innerJoin(parts, eq(parts.id, purchaseRequests.partId))
		.innerJoin(users, eq(users.id, purchaseRequests.createdBy))
		.leftJoin(suppliers, eq(suppliers.id, purchaseRequests.supplierId))
		.where(and(...conds))
		.orderBy(desc(purchaseRequests.updatedAt), desc(purchaseRequests.id))
		.limit(500);
	return rows.map(({ r, sku, partName, supplier, createdByName }) => ({
		id: r.id,
		partId: r.partId,
		sku,
		partName,
		supplier,
		status: r.status,
		quantity: r.quantity,
		receivedQuantity: r.receivedQuantity,
		unitPrice: toMajor(r.unitPriceMinor),
		currency: r.currency,
		leadTimeDays: r.leadTimeDays,
		orderReference: r.orderReference,
		note: r.note,
		createdBy: { id: r.createdBy, name: createdByName },
		createdAt: r.createdAt.toISOString(),
		updatedAt: r.updatedAt.toISOString(),
		allowedSteps: NAMED_STEPS[r.status],
		receivable: RECEIVABLE.includes(r.status)
	}));
}
export type RequestJson = Awaited<ReturnType<typeof listRequests>>[number];

/** One request with its history (oldest event first), or 404. */
export async function getRequest(db: DbOrTx, requestId: number) {
	const [r] = await listRequests(db, { ids: [requestId] });
	if (!r) throw notFound(requestId);
	const events = await db
		.select({ e: purchaseRequestEvents, userName: users.name, locationCode: locations.code })
		.from(purchaseRequestEvents)
		.innerJoin(users, eq(users.id, purchaseRequestEvents.userId))
		.leftJoin(locations, eq(locations.id, purchaseRequestEvents.locationId))
		.where(eq(purchaseRequestEvents.requestId, requestId))
		.orderBy(asc(purchaseRequestEvents.at), asc(purchaseRequestEvents.id));
	return {
		...r,
		events: events.map(({ e, userName, locationCode }) => ({
			id: e.id,
			at: e.at.toISOString(),
			userId: e.userId,
			userName,
			from: e.fromStatus,
			to: e.toStatus,
			quantity: e.quantity,
			locationId: e.locationId,
			locationCode,
			movementId: e.movementId,
			note: e.note
		}))
	};
}

/** Units on open requests per part (asked for, not yet received): the board's "on order". */
export async function onOrderByPart(db: DbOrTx): Promise<Map<number, number>> {
	const rows = await db
		.select({ partId: purchaseRequests.partId, q: sql<string>`sum(${purchaseRequests.quantity} - ${purchaseRequests.receivedQuantity})` })
		.from(purchaseRequests)
		.where(inArray(purchaseRequests.status, ['draft', 'requested', 'ordered', 'partly-received']))
		.groupBy(purchaseRequests.partId);
	return new Map(rows.map((r) => [r.partId, Number(r.q)]));
}
