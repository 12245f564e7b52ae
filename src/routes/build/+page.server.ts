import { redirect } from '@sveltejs/kit';
import { ZodError } from 'zod';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { hasRole, requireRole } from '$lib/server/auth/guard';
import { PURCHASERS, SOLVER_USERS } from '$lib/roles';
import { DomainError, zodFields } from '$lib/server/errors';
import { failFrom, formFailure } from '$lib/server/form-failure';
import { unlockForQuestion } from '$lib/server/purchasing/unlock-search';
import { listProjects } from '$lib/server/stock/projects';
import * as form from '$lib/server/solver/form';
import { getDefaultWavelengthNm } from '$lib/server/catalogue/settings';
import * as setups from '$lib/server/solver/setups';
import * as setupList from '$lib/server/solver/setup-list';

import * as solver from '$lib/server/solver/service';

/** Saved setups listed under the form; the rest are on /build/setups. */
const SAVED_ON_PAGE = 8;

/**
 * The question (imaging, beam with its preset, or afocal) lives in the URL. With JavaScript the
 * page fetches the answer from POST /api/v1/solve; without it (the form sends `nojs=1`) the load
 * solves on the server.
 */
export const load = (async (event) => {
	const user = requireRole(event, SOLVER_USERS);
	const parsed = form.readBuildForm(event.url.searchParams, await getDefaultWavelengthNm(db));
	let ssr: Awaited<ReturnType<typeof solver.solve>> | null = null;
	let ssrError: string | null = null;
	if (parsed.request && event.url.searchParams.get('nojs') === '1') {
		try {
			ssr = await solver.solve(db, parsed.request, { id: user.id });
		} catch (e) {
			if (e instanceof DomainError) ssrError = e.fields ? Object.values(e.fields).join(' ') : e.message;
			else throw e;
		}
	}
	const [projects, saved] = await Promise.all([listProjects(db), setupList.listSavedSetups(db, { userId: user.id, limit: SAVED_ON_PAGE })]);
	return { ...parsed, ssr, ssrError, projects, saved, canRequest: hasRole(user, PURCHASERS) };
}) satisfies PageServerLoad;

export const actions = {
	save: async (event) => {
		const user = requireRole(event, SOLVER_USERS);
		const data = await event.request.formData();
		const values = { name: String(data.get('name') ?? ''), projectId: String(data.get('projectId') ?? '') };
		let body: unknown;
		try {
			body = {
				name: values.name,
				projectId: values.projectId ? Number(values.projectId) : null,
				query: JSON.parse(String(data.get('query') ?? 'null')),
				choice: JSON.parse(String(data.get('choice') ?? 'null'))
			};
		} catch {
			return formFailure(400, { form: 'save', errors: { choice: 'Choose a solution first.' }, values });
		}
		let id: number;
		try {
			id = (await setups.createSetup(db, body, { id: user.id })).id;
		} catch (e) {
			return failFrom(e, { form: 'save', values });
		}
		redirect(303, `/build/${id}`);
	},
	/**
	 * "What purchase would help?": the question in the URL, searched over the whole catalogue for the
	 * best setup that one purchase makes buildable (the same service as POST /api/v1/reorder/unlock).
	 */
	unlock: async (event) => {
		const user = requireRole(event, SOLVER_USERS);
		const parsed = form.readBuildForm(event.url.searchParams, await getDefaultWavelengthNm(db));
		if (!parsed.request) return formFailure(400, { form: 'unlock', message: 'Ask a complete question first: the form above has a field to fix.' });
		try {
			return { unlock: { answer: await unlockForQuestion(db, parsed.request, { id: user.id }, event.request.signal) } };
		} catch (e) {
			if (e instanceof ZodError) return formFailure(400, { form: 'unlock', message: Object.values(zodFields(e)).join(' ') });
			return failFrom(e, { form: 'unlock' });
		}
	}
} satisfies Actions;
