import { error, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import { failFrom } from '$lib/server/form-failure';
import { PART_KINDS } from '$lib/server/db/schema';
import * as parts from '$lib/server/catalogue/parts';
import { listMaterials } from '$lib/server/catalogue/materials';
import { formStrings, partFormValues, readPartForm } from '$lib/server/catalogue/forms';

/** The part's id (the `id` matcher has checked it). */
const idOf = (param: string) => Number(param);

export const load = (async (event) => {
	requireRole(event, STOCK_EDITORS);
	const record = await parts.getPart(db, idOf(event.params.id));
	if (!record) error(404, { message: 'There is no such part.' });
	return {
		id: record.part.id,
		sku: record.part.sku,
		values: partFormValues(parts.toInput(record)),
		kinds: PART_KINDS,
		materials: await listMaterials(db)
	};
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const id = idOf(event.params.id);
		const form = await event.request.formData();
		try {
			await parts.updatePart(db, id, readPartForm(form, { clearEmpty: true }), { id: user.id, role: user.role });
		} catch (e) {
			return failFrom(e, { values: formStrings(form) });
		}
		redirect(303, `/parts/${id}`);
	}
} satisfies Actions;
