import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { RESERVERS } from '$lib/roles';
import * as reservations from '$lib/server/stock/reservations';
import { idParam } from '$lib/server/catalogue/params';

/** Releases a reservation (its owner, or the stockroom); 404 for someone else's. */
export const DELETE = endpoint(async (event) => {
	const user = requireRole(event, RESERVERS);
	return json(await reservations.releaseReservation(db, idParam(event.params.id, 'reservation'), user));
}) satisfies RequestHandler;
