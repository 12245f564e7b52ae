import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { hasRole, requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS } from '$lib/roles';
import * as locations from '$lib/server/stock/locations';
import { guarded } from '$lib/server/stock/form-actions';
import { readForm } from '$lib/server/catalogue/forms';
import { formFailure } from '$lib/server/form-failure';

export const load = (async (event) => {
	const user = requireRole(event, ANY_ROLE);
	return { locations: await locations.listLocations(db, { includeArchived: true }), canEdit: hasRole(user, STOCK_EDITORS) };
}) satisfies PageServerLoad;

export const actions = {
	create: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const form = await event.request.formData();
		return guarded('create', form, () => locations.createLocation(db, readForm(form, [], ['code', 'name']), { id: user.id }));
	},
	rename: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const form = await event.request.formData();
		const id = Number(form.get('id'));
		if (!Number.isInteger(id) || id <= 0) return formFailure(404, { form: 'rename', message: 'There is no such location.' });
		return guarded(`rename-${id}`, form, () => locations.updateLocation(db, id, readForm(form, [], ['code', 'name']), { id: user.id }));
	},
	archive: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const form = await event.request.formData();
		const id = Number(form.get('id'));
		if (!Number.isInteger(id) || id <= 0) return formFailure(404, { form: 'archive', message: 'There is no such location.' });
		return guarded(`archive-${id}`, form, () => locations.setLocationArchived(db, id, form.get('archived') === 'true', { id: user.id }));
	}
} satisfies Actions;
