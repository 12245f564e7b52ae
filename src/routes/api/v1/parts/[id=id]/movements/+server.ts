import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';
import * as parts from '$lib/server/catalogue/parts';
import { movementQuerySchema, movementRows } from '$lib/server/stock/operations';
import { idParam } from '$lib/server/catalogue/params';

/** The ledger of a part, newest first. */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	const id = idParam(event.params.id, 'part');
	if (!(await parts.getPart(db, id))) throw new parts.PartNotFound(id);
	const q = movementQuerySchema.parse(Object.fromEntries(event.url.searchParams));
	return json({ items: await movementRows(db, { partId: id, ...q }), limit: q.limit, offset: q.offset });
}) satisfies RequestHandler;
