/**
 * Form actions fail in one shape, `FormFailure` (`$lib/form-failure`), whatever went wrong: pages read
 * it with `failureOf`. `failFrom` turns an error thrown by a service (a
 * `DomainError` or a zod error) into it; `formFailure` makes one by hand (a check in the action itself).
 */
import { fail, type ActionFailure } from '@sveltejs/kit';
import { ZodError } from 'zod';
import { DomainError, zodFields } from '$lib/server/errors';
import type { FormFailure, RowError } from '$lib/form-failure';

export type { FormFailure, RowError } from '$lib/form-failure';

export type FormFailureInit = Partial<Omit<FormFailure, 'rows'>> & { rows?: readonly RowError[] };

/** `fail(status, …)` in the one shape. */
export function formFailure(status: number, init: FormFailureInit = {}): ActionFailure<FormFailure> {
	return fail(status, {
		form: init.form ?? '',
		message: init.message ?? '',
		errors: init.errors ?? {},
		values: init.values ?? {},
		rows: [...(init.rows ?? [])]
	});
}

/**
 * An expected failure as a `FormFailure`: a `DomainError` keeps its status, message and field messages
 * (and its refused rows, when it has `lines`); a zod error is 400 with a message per field. Anything
 * else is thrown again (handleError logs it and the page shows the error page).
 */
export function failFrom(err: unknown, init: Omit<FormFailureInit, 'errors' | 'rows'> = {}): ActionFailure<FormFailure> {
	if (err instanceof ZodError) return formFailure(400, { ...init, errors: zodFields(err) });
	if (err instanceof DomainError) {
		const lines = (err as DomainError & { lines?: readonly RowError[] }).lines;
		return formFailure(err.status, { ...init, message: init.message ?? err.message, errors: err.fields ?? {}, rows: Array.isArray(lines) ? lines : [] });
	}
	throw err;
}

/** Runs `work`; an expected failure becomes a `FormFailure` (see `failFrom`). */
export async function attempt<T>(init: Omit<FormFailureInit, 'errors' | 'rows'>, work: () => Promise<T>): Promise<T | ActionFailure<FormFailure>> {
	try {
		return await work();
	} catch (err) {
		return failFrom(err, init);
	}
}
