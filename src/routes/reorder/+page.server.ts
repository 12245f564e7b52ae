import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS } from '$lib/server/auth/roles';
import { ApiError, DomainError, zodFields } from '$lib/server/api/http';
import * as board from '$lib/server/purchasing/board';
import * as requests from '$lib/server/purchasing/requests';
import { exportQuery } from '$lib/server/purchasing/params';
import { unlockForSetup } from '$lib/server/purchasing/unlock-search';
import { ZodError } from 'zod';

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
		const selected = form.getAll('partId').map(String);
		const status = form.get('status') === 'requested' ? 'requested' : 'draft';
		let ids: number[];
		try {
			const { partIds, quantities } = exportQuery(form);
			const rows = new Map((await board.boardRows(db, { partIds })).map((r) => [r.partId, r]));
			const inputs = partIds.map((partId) => ({ partId, quantity: quantities.get(partId) ?? rows.get(partId)?.suggestedQuantity ?? 0, status }));
			const zero = inputs.find((i) => i.quantity < 1);
			if (zero) return fail(400, { values, selected, errors: { [`qty-${zero.partId}`]: 'Order at least 1 unit.' } as Record<string, string> });
			ids = await requests.createRequests(db, inputs, { id: user.id, role: user.role });
		} catch (err) {
			if (err instanceof ApiError || err instanceof DomainError) return fail(err.status, { values, selected, errors: err.fields ?? { _: err.message } });
			if (err instanceof ZodError) return fail(400, { values, selected, errors: zodFields(err) });
			throw err;
		}
		redirect(303, `/requests?created=${ids.join(',')}`);
	},
	/** Searches the whole catalogue for the best single purchase for a saved setup (the solver with availableOnly: false). */
	unlock: async (event) => {
		const user = requireRole(event, PURCHASERS);
		const raw = String((await event.request.formData()).get('setupId') ?? '');
		if (!/^[1-9]\d{0,15}$/.test(raw)) return fail(400, { unlockError: 'Choose a setup.', setupId: null });
		const setupId = Number(raw);
		try {
			return { setupId, unlock: await unlockForSetup(db, setupId, user, event.request.signal) };
		} catch (err) {
			if (err instanceof DomainError || err instanceof ApiError) return fail(err.status, { setupId, unlockError: err.message });
			if (err instanceof ZodError) return fail(400, { setupId, unlockError: 'The saved question of this setup is no longer valid for the solver.' });
			throw err;
		}
	}
} satisfies Actions;
