import { redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { REQUEST_STATUSES, type RequestStatus } from '$lib/server/db/schema';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS, REQUEST_VIEWERS } from '$lib/roles';
import { failFrom, formFailure } from '$lib/server/form-failure';
import * as requests from '$lib/server/purchasing/requests';
import { STATUS_LABELS } from '$lib/server/purchasing/states';
import { findPartIdBySku } from '$lib/server/catalogue/parts';

export const load = (async (event) => {
	const user = requireRole(event, REQUEST_VIEWERS);
	const raw = event.url.searchParams.get('status') ?? 'open';
	const status = (REQUEST_STATUSES as readonly string[]).includes(raw) ? (raw as RequestStatus) : undefined;
	const filter = status ? 'status' : raw === 'all' ? 'all' : 'open';
	const created = (event.url.searchParams.get('created') ?? '')
		.split(',')
		.filter((s) => /^\d{1,15}$/.test(s))
		.map(Number);
	const items = await requests.listRequests(db, filter === 'status' ? { status } : filter === 'open' ? { statuses: ['draft', 'requested', 'ordered', 'partly-received'] } : {});
	return {
		items,
		filter: status ?? filter,
		created,
		statuses: REQUEST_STATUSES.map((s) => ({ value: s, label: STATUS_LABELS[s] })),
		mayCreate: PURCHASERS.includes(user.role)
	};
}) satisfies PageServerLoad;

export const actions = {
	/** A request for one part typed by SKU. */
	create: async (event) => {
		const user = requireRole(event, PURCHASERS);
		const form = Object.fromEntries(await event.request.formData());
		const values = { sku: String(form.sku ?? '').trim(), quantity: String(form.quantity ?? '').trim(), note: String(form.note ?? '') };
		const partId = values.sku ? await findPartIdBySku(db, values.sku) : null;
		if (!partId) return formFailure(400, { values, errors: { sku: values.sku ? `No part has the SKU ${values.sku}.` : 'Enter a SKU.' } });
		let id: number;
		try {
			id = await requests.createRequest(
				db,
				{ partId, quantity: /^\d+$/.test(values.quantity) ? Number(values.quantity) : NaN, status: form.status === 'requested' ? 'requested' : 'draft', note: values.note || null },
				{ id: user.id, role: user.role }
			);
		} catch (err) {
			return failFrom(err, { values });
		}
		redirect(303, `/requests/${id}`);
	}
} satisfies Actions;
