import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS } from '$lib/roles';
import * as parts from '$lib/server/catalogue/parts';
import * as measurements from '$lib/server/catalogue/measurements';
import { idParam } from '$lib/server/catalogue/params';

/** All measurements of a part, newest first (the first is the one the solver uses). */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	const id = idParam(event.params.id, 'part');
	if (!(await parts.getPart(db, id))) throw new parts.PartNotFound(id);
	return json({ items: await measurements.listMeasurements(db, id) });
}) satisfies RequestHandler;

/** Records a measured EFL; 201 with the measurement. */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, STOCK_EDITORS);
	const id = idParam(event.params.id, 'part');
	return json(await measurements.recordMeasurement(db, id, await readJson(event.request), { id: user.id }), { status: 201 });
}) satisfies RequestHandler;
