import { redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { endSession } from '$lib/server/auth/sessions';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';

export const load = (async (event) => {
	requireRole(event, ANY_ROLE);
	redirect(303, '/');
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		requireRole(event, ANY_ROLE);
		if (event.locals.session) await endSession(event.locals.session, event.cookies);
		redirect(303, '/signin');
	}
} satisfies Actions;
