import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { SOLVER_USERS } from '$lib/roles';
import * as setups from '$lib/server/solver/setups';

const idParam = z.coerce.number().int().positive();

/** One setup: question, chosen solution (re-evaluated when saved), active reservations. */
export const GET = endpoint(async (event) => {
	requireRole(event, SOLVER_USERS);
	return json(await setups.getSetup(db, idParam.parse(event.params.id)));
}) satisfies RequestHandler;
