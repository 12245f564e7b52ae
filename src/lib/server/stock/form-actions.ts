/**
 * Form actions for stock operations, measurements and reservations on the part page: read
 * the form, run the service, and turn expected failures into the one `FormFailure` with field
 * messages and the typed values, keyed by `form` so the page shows them at the right form.
 */
import type { RequestEvent } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { failFrom } from '$lib/server/form-failure';
import type { SignedInUser } from '$lib/server/auth/guard';
import { formStrings, readForm } from '$lib/server/catalogue/forms';
import { OPERATIONS, type OperationName } from './operations';

const NUMBERS = ['quantity', 'locationId', 'fromLocationId', 'toLocationId', 'delta', 'projectId', 'reservationId'];
const TEXTS = ['condition', 'from', 'to', 'issuedTo', 'reason', 'note'];

/** Runs `work`: `{ form: key, ok, result }`, or the failure of form `key` with the typed values. */
export async function guarded<T>(key: string, form: FormData, work: () => Promise<T>) {
	try {
		return { form: key, ok: true as const, result: await work() };
	} catch (e) {
		return failFrom(e, { form: key, values: formStrings(form) });
	}
}

/** A stock operation from the part page's form. */
export async function stockFormAction(event: RequestEvent, name: OperationName, partId: number, user: SignedInUser) {
	const form = await event.request.formData();
	const input = { ...readForm(form, NUMBERS, TEXTS), partId };
	return guarded(name, form, () => OPERATIONS[name](db, input, { id: user.id }));
}
