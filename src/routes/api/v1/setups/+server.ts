import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { SOLVER_USERS } from '$lib/roles';
import * as setups from '$lib/server/solver/setups';

/** Recent setups, newest first. */
export const GET = endpoint(async (event) => {
	requireRole(event, SOLVER_USERS);
	return json({ items: await setups.listSetups(db, 50) });
}) satisfies RequestHandler;

/** Saves `{name, projectId?, query, choice}`; the server re-evaluates the choice before storing it. 201 with the setup. */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, SOLVER_USERS);
	const { id } = await setups.createSetup(db, await readJson(event.request), { id: user.id });
	return json(await setups.getSetup(db, id), { status: 201 });
}) satisfies RequestHandler;
