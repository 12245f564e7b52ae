import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS } from '$lib/roles';
import * as parts from '$lib/server/catalogue/parts';
import { parseListQuery } from '$lib/server/catalogue/list';

/** The catalogue: filtered, sorted, one page at a time. */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	return json(await parts.listParts(db, parseListQuery(event.url.searchParams)));
}) satisfies RequestHandler;

/** Creates a part; 201 with its Part JSON. */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, STOCK_EDITORS);
	const { id } = await parts.createPart(db, await readJson(event.request), { id: user.id, role: user.role });
	return json(await parts.getPartJson(db, id), { status: 201, headers: { location: `/api/v1/parts/${id}` } });
}) satisfies RequestHandler;
