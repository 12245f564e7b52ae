import { error, fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { ZodError } from 'zod';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS } from '$lib/server/auth/roles';
import { DomainError, zodFields } from '$lib/server/api/http';
import * as parts from '$lib/server/catalogue/parts';

function partId(raw: string): number {
	if (!/^[1-9]\d{0,15}$/.test(raw)) error(404, { code: 'not-found', message: 'There is no such part.' });
	return Number(raw);
}

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
			if (err instanceof ZodError) return fail(400, { values, errors: zodFields(err) });
			if (err instanceof DomainError) return fail(err.status, { values, errors: err.fields ?? { _: err.message } });
			throw err;
		}
		return { saved: true };
	}
} satisfies Actions;
