import { error } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS } from '$lib/roles';
import { DomainError } from '$lib/server/errors';
import { failFrom } from '$lib/server/form-failure';
import * as parts from '$lib/server/catalogue/parts';

/** The part's id (the `id` matcher has checked it). */
const partId = (raw: string) => Number(raw);

async function partOr404(id: number) {
	try {
		return await parts.getPartJson(db, id);
	} catch (err) {
		if (err instanceof DomainError && err.status === 404) error(404, { code: 'not-found', message: err.message });
		throw err;
	}
}

export const load = (async (event) => {
	requireRole(event, PURCHASERS);
	return { part: await partOr404(partId(event.params.id)) };
}) satisfies PageServerLoad;

const FIELDS = ['reorderPoint', 'reorderQuantity', 'supplier', 'supplierPartNumber', 'unitPrice', 'currency', 'leadTimeDays'] as const;

/** Form text → the PATCH body of the purchasing fields (prices typed in major units, "12.50"). */
function patchFrom(values: Record<string, string>): Record<string, unknown> {
	const int = (s: string) => (/^\d{1,9}$/.test(s.trim()) ? Number(s.trim()) : s.trim() === '' ? null : NaN);
	const price = values.unitPrice.trim();
	return {
		reorderPoint: int(values.reorderPoint) ?? 0,
		reorderQuantity: int(values.reorderQuantity) ?? 0,
		supplier: values.supplier.trim() || null,
		supplierPartNumber: values.supplierPartNumber.trim() || null,
		unitPrice: price === '' ? null : /^\d+(\.\d{1,2})?$/.test(price) ? Number(price) : NaN,
		currency: values.currency.trim().toUpperCase(),
		leadTimeDays: int(values.leadTimeDays)
	};
}

export const actions = {
	/** Saves the purchasing fields through the parts service (a purchaser may change only these). */
	default: async (event) => {
		const user = requireRole(event, PURCHASERS);
		const id = partId(event.params.id);
		const form = await event.request.formData();
		const values = Object.fromEntries(FIELDS.map((f) => [f, String(form.get(f) ?? '')])) as Record<(typeof FIELDS)[number], string>;
		try {
			await parts.updatePart(db, id, patchFrom(values), { id: user.id, role: user.role });
		} catch (err) {
			return failFrom(err, { values });
		}
		return { saved: true };
	}
} satisfies Actions;
