import { error, fail } from '@sveltejs/kit';
import { z, ZodError } from 'zod';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole, hasRole } from '$lib/server/auth/guard';
import { SOLVER_USERS, RESERVERS } from '$lib/server/auth/roles';
import { DomainError, zodFields } from '$lib/server/api/http';
import { listProjects } from '$lib/server/stock/projects';
import * as setups from '$lib/server/solver/setups';

const idParam = z.coerce.number().int().positive();

async function find(raw: string) {
	const id = idParam.safeParse(raw);
	if (!id.success) error(404, { message: 'There is no such setup.' });
	try {
		return await setups.getSetup(db, id.data);
	} catch (e) {
		if (e instanceof DomainError && e.status === 404) error(404, { message: e.message });
		throw e;
	}
}

export const load = (async (event) => {
	const user = requireRole(event, SOLVER_USERS);
	const setup = await find(event.params.setup);
	return { setup, projects: await listProjects(db), canReserve: hasRole(user, RESERVERS) };
}) satisfies PageServerLoad;

export const actions = {
	reserve: async (event) => {
		const user = requireRole(event, RESERVERS);
		const setup = await find(event.params.setup);
		const data = await event.request.formData();
		const values = { until: String(data.get('until') ?? ''), projectId: String(data.get('projectId') ?? '') };
		try {
			const items = await setups.reserveSetup(
				db,
				setup.id,
				{ until: values.until ? `${values.until}T23:59:59Z` : '', projectId: values.projectId ? Number(values.projectId) : null },
				{ id: user.id }
			);
			return { reserved: items.length };
		} catch (e) {
			if (e instanceof ZodError) return fail(400, { errors: zodFields(e), values });
			if (e instanceof DomainError) return fail(e.status, { errors: e.fields ?? {}, message: e.message, values });
			throw e;
		}
	}
} satisfies Actions;
