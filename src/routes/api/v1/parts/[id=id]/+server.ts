import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, PART_PATCHERS, STOCK_EDITORS } from '$lib/roles';
import * as parts from '$lib/server/catalogue/parts';
import { idParam } from '$lib/server/catalogue/params';

/** One part as Part JSON. */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	return json(await parts.getPartJson(db, idParam(event.params.id, 'part')));
}) satisfies RequestHandler;

/** Changes some fields of a part. Purchasers may change only the purchasing fields (else 403). */
export const PATCH = endpoint(async (event) => {
	const user = requireRole(event, PART_PATCHERS);
	const id = idParam(event.params.id, 'part');
	await parts.updatePart(db, id, await readJson(event.request), { id: user.id, role: user.role });
	return json(await parts.getPartJson(db, id));
}) satisfies RequestHandler;

/** Archives the part (deleted outright only when it never had stock, a ledger, reservations or measurements). */
export const DELETE = endpoint(async (event) => {
	const user = requireRole(event, STOCK_EDITORS);
	return json(await parts.archivePart(db, idParam(event.params.id, 'part'), { id: user.id, role: user.role }));
}) satisfies RequestHandler;
