import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { SOLVER_USERS } from '$lib/roles';
import * as solver from '$lib/server/solver/service';

/** Build from stock: the imaging question → ranked, traced solutions and stats (see DESIGN.md "The solver"). */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, SOLVER_USERS);
	const body = await readJson(event.request);
	return json(await solver.solve(db, body, { id: user.id }, event.request.signal));
}) satisfies RequestHandler;
