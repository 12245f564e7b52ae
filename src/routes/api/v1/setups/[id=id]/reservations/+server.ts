import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { RESERVERS } from '$lib/roles';
import * as setups from '$lib/server/solver/setups';

const idParam = z.coerce.number().int().positive();

/** Reserves every part of the setup in one step `{until, projectId?}`; 201, or 409 when a unit is gone (nothing reserved). */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, RESERVERS);
	const items = await setups.reserveSetup(db, idParam.parse(event.params.id), await readJson(event.request), { id: user.id });
	return json({ items }, { status: 201 });
}) satisfies RequestHandler;
