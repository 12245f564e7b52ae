import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS } from '$lib/roles';
import * as locations from '$lib/server/stock/locations';

/** Storage locations with their unit counts (`?archived=include` lists archived ones too). */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	return json({ items: await locations.listLocations(db, { includeArchived: event.url.searchParams.get('archived') === 'include' }) });
}) satisfies RequestHandler;

/** Creates a location `{code, name}`; 201. */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, STOCK_EDITORS);
	return json(await locations.createLocation(db, await readJson(event.request), { id: user.id }), { status: 201 });
}) satisfies RequestHandler;
