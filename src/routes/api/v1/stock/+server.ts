import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/server/auth/roles';
import { stockRows } from '$lib/server/stock/locations';

const query = z.object({ locationId: z.coerce.number().int().positive().optional(), partId: z.coerce.number().int().positive().optional() }).strict();

/** Stock rows (quantity > 0) by location, optionally of one location or one part. */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	return json({ items: await stockRows(db, query.parse(Object.fromEntries(event.url.searchParams))) });
}) satisfies RequestHandler;
