import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import * as requests from '$lib/server/purchasing/requests';
import { patchAndNotify } from '$lib/server/purchasing/service';
import { REQUEST_VIEWERS } from '$lib/roles';
import { idParam } from '$lib/server/catalogue/params';

/** One request with its history. */
export const GET = endpoint(async (event) => {
	requireRole(event, REQUEST_VIEWERS);
	return json(await requests.getRequest(db, idParam(event.params.id, 'purchase request')));
}) satisfies RequestHandler;

/**
 * Edits or steps a request: `{status}` (draft, requested, ordered, cancelled, closed as states.ts
 * allows; else 409), `{quantity, unitPrice}` while draft or requested, `{orderReference}`, or
 * `{receive: {quantity, locationId, condition?}}` on an ordered request (writes the stock
 * receive movement). Purchasers do everything; the stockroom may only receive.
 */
export const PATCH = endpoint(async (event) => {
	const user = requireRole(event, REQUEST_VIEWERS);
	const id = idParam(event.params.id, 'purchase request');
	const result = await patchAndNotify(db, id, await readJson(event.request), { id: user.id, role: user.role });
	return json({ ...(await requests.getRequest(db, id)), receipt: result.receipt ? { movementId: result.receipt.movementId, quantity: result.receipt.quantity, notified: result.notified } : undefined });
}) satisfies RequestHandler;
