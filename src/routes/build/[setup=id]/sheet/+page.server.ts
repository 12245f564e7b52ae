import { error } from '@sveltejs/kit';
import { z } from 'zod';
import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { SOLVER_USERS } from '$lib/roles';
import { DomainError } from '$lib/server/errors';
import * as setups from '$lib/server/solver/setups';

export const load = (async (event) => {
	requireRole(event, SOLVER_USERS);
	const id = z.coerce.number().int().positive().safeParse(event.params.setup);
	if (!id.success) error(404, { message: 'There is no such setup.' });
	try {
		return { setup: await setups.getSetup(db, id.data), printedAt: new Date().toISOString() };
	} catch (e) {
		if (e instanceof DomainError && e.status === 404) error(404, { message: e.message });
		throw e;
	}
}) satisfies PageServerLoad;
