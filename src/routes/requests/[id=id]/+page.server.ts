import { error } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS, REQUEST_VIEWERS } from '$lib/roles';
import { failFrom } from '$lib/server/form-failure';
import { DomainError } from '$lib/server/errors';
import * as requests from '$lib/server/purchasing/requests';
import { patchAndNotify } from '$lib/server/purchasing/service';
import { STATUS_LABELS } from '$lib/server/purchasing/states';
import { homeLocationOf, listLocations } from '$lib/server/stock/locations';
import type { SignedInUser } from '$lib/server/auth/guard';

/** The request's id (the `id` matcher has checked it). */
const requestId = (raw: string) => Number(raw);

export const load = (async (event) => {
	const user = requireRole(event, REQUEST_VIEWERS);
	const id = requestId(event.params.id);
	let request;
	try {
		request = await requests.getRequest(db, id);
	} catch (err) {
		if (err instanceof DomainError && err.status === 404) error(404, { code: 'not-found', message: err.message });
		throw err;
	}
	return {
		request,
		labels: STATUS_LABELS,
		locations: (await listLocations(db)).map((l) => ({ id: l.id, code: l.code, name: l.name })),
		/** Receiving preselects the part's drawer. */
		homeLocationId: await homeLocationOf(db, request.partId),
		mayManage: PURCHASERS.includes(user.role)
	};
}) satisfies PageServerLoad;

/** Runs a change: `{ form: which, done }`, or the failure of the form `which`. */
async function change(event: { params: { id: string } }, user: SignedInUser, which: string, body: unknown, values: Record<string, string>) {
	try {
		const r = await patchAndNotify(db, requestId(event.params.id), body, { id: user.id, role: user.role });
		return { form: which, done: r.receipt ? `Received ${r.receipt.quantity} into stock${r.notified ? `; ${r.notified} engineer${r.notified === 1 ? '' : 's'} told` : ''}.` : `Now ${STATUS_LABELS[r.status].toLowerCase()}.` };
	} catch (err) {
		return failFrom(err, { form: which, values });
	}
}

const int = (v: FormDataEntryValue | null) => (v != null && /^\d{1,9}$/.test(String(v).trim()) ? Number(String(v).trim()) : NaN);
const text = (v: FormDataEntryValue | null) => (v == null ? '' : String(v));

export const actions = {
	/** A named step: requested, ordered, draft, cancelled, closed. */
	step: async (event) => {
		const user = requireRole(event, PURCHASERS);
		const f = await event.request.formData();
		const values = { note: text(f.get('note')), orderReference: text(f.get('orderReference')) };
		const body: Record<string, unknown> = { status: text(f.get('status')), note: values.note.trim() || null };
		if (f.has('orderReference') && values.orderReference.trim()) body.orderReference = values.orderReference.trim();
		return change(event, user, 'step', body, values);
	},
	receive: async (event) => {
		const user = requireRole(event, REQUEST_VIEWERS);
		const f = await event.request.formData();
		const values = { quantity: text(f.get('quantity')), locationId: text(f.get('locationId')), condition: text(f.get('condition')) || 'usable', note: text(f.get('note')) };
		return change(
			event,
			user,
			'receive',
			{ receive: { quantity: int(f.get('quantity')), locationId: int(f.get('locationId')), condition: values.condition }, note: values.note.trim() || null },
			values
		);
	},
	edit: async (event) => {
		const user = requireRole(event, PURCHASERS);
		const f = await event.request.formData();
		const values = { quantity: text(f.get('quantity')), unitPrice: text(f.get('unitPrice')) };
		const price = values.unitPrice.trim();
		const major = /^\d+(\.\d{1,2})?$/.test(price) ? Number(price) : price === '' ? null : NaN;
		return change(event, user, 'edit', { quantity: int(f.get('quantity')), unitPrice: major }, values);
	}
} satisfies Actions;
