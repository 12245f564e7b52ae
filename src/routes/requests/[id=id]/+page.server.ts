import { error, fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { ZodError } from 'zod';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS } from '$lib/server/auth/roles';
import { DomainError, zodFields } from '$lib/server/api/http';
import * as requests from '$lib/server/purchasing/requests';
import { patchAndNotify } from '$lib/server/purchasing/service';
import { REQUEST_VIEWERS } from '$lib/server/purchasing/roles';
import { STATUS_LABELS } from '$lib/server/purchasing/states';
import { homeLocationOf, listLocations } from '$lib/server/stock/locations';
import type { SignedInUser } from '$lib/server/auth/guard';

function requestId(raw: string): number {
	if (!/^[1-9]\d{0,15}$/.test(raw)) error(404, { code: 'not-found', message: 'There is no such request.' });
	return Number(raw);
}

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

/** Runs a change and maps expected failures to the form of `which`. */
async function change(event: { params: { id: string } }, user: SignedInUser, which: string, body: unknown, values: Record<string, string>) {
	try {
		const r = await patchAndNotify(db, requestId(event.params.id), body, { id: user.id, role: user.role });
		return { which, done: r.receipt ? `Received ${r.receipt.quantity} into stock${r.notified ? `; ${r.notified} engineer${r.notified === 1 ? '' : 's'} told` : ''}.` : `Now ${STATUS_LABELS[r.status].toLowerCase()}.` };
	} catch (err) {
		if (err instanceof ZodError) return fail(400, { which, values, errors: zodFields(err) });
		if (err instanceof DomainError) {
			// The general message only when no field already says it (else the form shows it twice).
			const fields = err.fields ?? {};
			const said = Object.values(fields).includes(err.message);
			return fail(err.status, { which, values, errors: said ? { ...fields } : { ...fields, _: err.message } });
		}
		throw err;
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
