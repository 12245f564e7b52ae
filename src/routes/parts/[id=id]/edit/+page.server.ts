import { error, fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/server/auth/roles';
import { DomainError, zodFields } from '$lib/server/api/http';
import { PART_KINDS } from '$lib/server/db/schema';
import * as parts from '$lib/server/catalogue/parts';
import { listMaterials } from '$lib/server/catalogue/materials';
import { formStrings, partFormValues, readPartForm } from '$lib/server/catalogue/forms';

function idOf(param: string) {
	if (!/^[1-9]\d{0,15}$/.test(param)) error(404, { message: 'There is no such part.' });
	return Number(param);
}

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
			if (parts.isInvalidInput(e)) return fail(400, { errors: zodFields(e), values: formStrings(form) });
			if (e instanceof DomainError) return fail(e.status, { errors: e.fields ?? { _: e.message }, values: formStrings(form) });
			throw e;
		}
		redirect(303, `/parts/${id}`);
	}
} satisfies Actions;
