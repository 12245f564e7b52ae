import { redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS } from '$lib/roles';
import { failFrom, formFailure } from '$lib/server/form-failure';
import * as board from '$lib/server/purchasing/board';
import * as requests from '$lib/server/purchasing/requests';
import { exportQuery } from '$lib/server/purchasing/params';
import { unlockForSetup } from '$lib/server/purchasing/unlock-search';
import { ZodError } from 'zod';
import { isId } from '$lib/id';

export const load = (async (event) => {
	requireRole(event, PURCHASERS);
	const [rows, waiting] = await Promise.all([board.boardRows(db), board.waitingSetups(db)]);
	return { rows, waiting: waiting.slice(0, 50), waitingTotal: waiting.length, usageDays: board.USAGE_DAYS };
}) satisfies PageServerLoad;

export const actions = {
	/** Creates one request per selected row, with the quantity typed in the row (default: the suggestion). */
	create: async (event) => {
		const user = requireRole(event, PURCHASERS);
		const form = await event.request.formData();
		const values = Object.fromEntries([...form.entries()].filter(([k]) => k.startsWith('qty-')).map(([k, v]) => [k, String(v)]));
		const status = form.get('status') === 'requested' ? 'requested' : 'draft';
		let ids: number[];
		try {
			const { partIds, quantities } = exportQuery(form);
			const rows = new Map((await board.boardRows(db, { partIds })).map((r) => [r.partId, r]));
			const inputs = partIds.map((partId) => ({ partId, quantity: quantities.get(partId) ?? rows.get(partId)?.suggestedQuantity ?? 0, status }));
			const zero = inputs.find((i) => i.quantity < 1);
			if (zero) return formFailure(400, { form: 'create', values, errors: { [`qty-${zero.partId}`]: 'Order at least 1 unit.' } });
			ids = await requests.createRequests(db, inputs, { id: user.id, role: user.role });
		} catch (err) {
			return failFrom(err, { form: 'create', values });
		}
		redirect(303, `/requests?created=${ids.join(',')}`);
	},
	/** Searches the whole catalogue for the best single purchase for a saved setup (the solver with availableOnly: false). */
	unlock: async (event) => {
		const user = requireRole(event, PURCHASERS);
		const raw = String((await event.request.formData()).get('setupId') ?? '');
		if (!isId(raw)) return formFailure(400, { form: 'unlock', message: 'Choose a setup.' });
		const setupId = Number(raw);
		try {
			return { setupId, unlock: await unlockForSetup(db, setupId, user, event.request.signal) };
		} catch (err) {
			const form = `unlock-${setupId}`;
			if (err instanceof ZodError) return formFailure(400, { form, message: 'The saved question of this setup is no longer valid for the solver.' });
			return failFrom(err, { form });
		}
	}
} satisfies Actions;
