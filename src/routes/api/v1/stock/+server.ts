import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';
import { stockQuerySchema, stockRows } from '$lib/server/stock/locations';

/** Stock rows (quantity > 0) by location, optionally of one location or one part. */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	return json({ items: await stockRows(db, stockQuerySchema.parse(Object.fromEntries(event.url.searchParams))) });
}) satisfies RequestHandler;
