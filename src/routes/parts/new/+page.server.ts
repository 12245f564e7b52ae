import { redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import { failFrom } from '$lib/server/form-failure';
import { PART_KINDS } from '$lib/server/db/schema';
import * as parts from '$lib/server/catalogue/parts';
import { listMaterials } from '$lib/server/catalogue/materials';
import { formStrings, readPartForm } from '$lib/server/catalogue/forms';

export const load = (async (event) => {
	requireRole(event, STOCK_EDITORS);
	return { kinds: PART_KINDS, materials: await listMaterials(db) };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const form = await event.request.formData();
		let id: number;
		try {
			({ id } = await parts.createPart(db, readPartForm(form), { id: user.id, role: user.role }));
		} catch (e) {
			return failFrom(e, { values: formStrings(form) });
		}
		redirect(303, `/parts/${id}`);
	}
} satisfies Actions;
