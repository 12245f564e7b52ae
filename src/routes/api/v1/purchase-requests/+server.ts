import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS, REQUEST_VIEWERS } from '$lib/roles';
import * as requests from '$lib/server/purchasing/requests';
import { z } from 'zod';

/** Purchase requests, newest change first; `?status=ordered`, `?partId=12`, `?open=true`. */
export const GET = endpoint(async (event) => {
	requireRole(event, REQUEST_VIEWERS);
	const q = requests.listQuerySchema.parse(Object.fromEntries(event.url.searchParams));
	const items = await requests.listRequests(db, { status: q.status, partId: q.partId, statuses: q.open === 'true' ? ['draft', 'requested', 'ordered', 'partly-received'] : undefined });
	return json({ items });
}) satisfies RequestHandler;

const bodySchema = z.union([z.object({ items: z.array(z.unknown()).min(1).max(500) }).strict(), z.object({}).passthrough()]);

/** Creates one request (`{partId, quantity, status?, unitPrice?, note?}`) or several (`{items: [...]}`) in one transaction. */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, PURCHASERS);
	const body = bodySchema.parse(await readJson(event.request));
	const inputs = 'items' in body && Array.isArray(body.items) ? body.items : [body];
	const ids = await requests.createRequests(db, inputs, { id: user.id, role: user.role });
	const items = await requests.listRequests(db, { ids });
	return json('items' in body ? { items } : items[0], { status: 201 });
}) satisfies RequestHandler;
