import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ADMINS } from '$lib/roles';
import * as outbox from '$lib/server/accounts/outbox';

/** Mail captured by the local mail fake, newest first (`?to=` filters by recipient, `?limit=`). */
export const GET = endpoint(async (event) => {
	requireRole(event, ADMINS);
	const query = outbox.outboxQuerySchema.parse(Object.fromEntries(event.url.searchParams));
	return json({ items: await outbox.list(db, query) });
}) satisfies RequestHandler;
