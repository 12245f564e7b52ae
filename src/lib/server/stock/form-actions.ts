/**
 * Form actions for stock operations, measurements and reservations on the part page: read
 * the form, run the service, and turn expected failures into `fail()` with field messages
 * and the typed values, keyed by `op` so the page shows them at the right form.
 */
import { fail, type RequestEvent } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { DomainError, zodFields } from '$lib/server/api/http';
import { ZodError } from 'zod';
import type { SignedInUser } from '$lib/server/auth/guard';
import { formStrings, readForm } from '$lib/server/catalogue/forms';
import { OPERATIONS, type OperationName } from './operations';

const NUMBERS = ['quantity', 'locationId', 'fromLocationId', 'toLocationId', 'delta', 'projectId', 'reservationId'];
const TEXTS = ['condition', 'from', 'to', 'issuedTo', 'reason', 'note'];

/** Runs `work` and maps ZodError / DomainError to fail(status, { op, errors, values }). */
export async function guarded<T>(op: string, form: FormData, work: () => Promise<T>) {
	try {
		return { op, ok: true as const, result: await work() };
	} catch (e) {
		if (e instanceof ZodError) return fail(400, { op, errors: zodFields(e), values: formStrings(form) });
		if (e instanceof DomainError) return fail(e.status, { op, errors: { ...(e.fields ?? {}), _: e.message }, values: formStrings(form) });
		throw e;
	}
}

/** A stock operation from the part page's form. */
export async function stockFormAction(event: RequestEvent, name: OperationName, partId: number, user: SignedInUser) {
	const form = await event.request.formData();
	const input = { ...readForm(form, NUMBERS, TEXTS), partId };
	return guarded(name, form, () => OPERATIONS[name](db, input, { id: user.id }));
}
