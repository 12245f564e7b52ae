import { error } from '@sveltejs/kit';
import { z, ZodError } from 'zod';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole, hasRole } from '$lib/server/auth/guard';
import { SOLVER_USERS, RESERVERS, PURCHASERS } from '$lib/roles';
import { DomainError } from '$lib/server/errors';
import { failFrom, formFailure } from '$lib/server/form-failure';
import { setupShortfall, unlockForSetup } from '$lib/server/purchasing/unlock-search';
import { totalsFor } from '$lib/server/stock/availability';
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
	const [projects, short, totals] = await Promise.all([
		listProjects(db),
		setupShortfall(db, setup),
		totalsFor(db, [...new Set(setup.solution.elements.map((e) => e.partId))])
	]);
	// Live availability (the saved solution carries the numbers of the day it was saved).
	const availableNow = Object.fromEntries([...totals].map(([id, t]) => [id, t.available]));
	return { setup, projects, short, availableNow, canReserve: hasRole(user, RESERVERS), canRequest: hasRole(user, PURCHASERS) };
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
			const units = items.reduce((n, r) => n + (r as { quantity: number }).quantity, 0);
			return { reserved: items.length, units, values };
		} catch (e) {
			return failFrom(e, { form: 'reserve', values });
		}
	},
	/** "What purchase would help?" for this setup's question (the same service as POST /api/v1/reorder/unlock). */
	unlock: async (event) => {
		const user = requireRole(event, SOLVER_USERS);
		const setup = await find(event.params.setup);
		try {
			return { unlock: { answer: await unlockForSetup(db, setup.id, { id: user.id }, event.request.signal) } };
		} catch (e) {
			if (e instanceof ZodError) return formFailure(400, { form: 'unlock', message: 'The saved question of this setup is no longer valid for the solver.' });
			return failFrom(e, { form: 'unlock' });
		}
	}
} satisfies Actions;
