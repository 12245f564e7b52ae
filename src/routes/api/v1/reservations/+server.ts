import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, RESERVERS } from '$lib/roles';
import * as reservations from '$lib/server/stock/reservations';

/** Reservations (`?partId=`, `?mine=true`, `?active=true`). */
export const GET = endpoint(async (event) => {
	const user = requireRole(event, ANY_ROLE);
	const q = reservations.reservationQuerySchema.parse(Object.fromEntries(event.url.searchParams));
	const items = await reservations.reservationRows(db, {
		partId: q.partId,
		userId: q.mine === 'true' ? user.id : undefined,
		activeOnly: q.active === 'true'
	});
	return json({ items });
}) satisfies RequestHandler;

/** Reserves units of a part `{partId, quantity, until, projectId?, note?}`; 201, or 409 when not enough are available. */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, RESERVERS);
	return json(await reservations.createReservation(db, await readJson(event.request), { id: user.id }), { status: 201 });
}) satisfies RequestHandler;
