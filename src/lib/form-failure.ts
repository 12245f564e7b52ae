/**
 * The one shape in which a form action fails (`$lib/server/form-failure` makes it), and how a page reads
 * it: `failureOf(form, key)` gives the failure of the form `key` (or of any form), or an empty one, so a
 * page never tests for fields of its own.
 */

/** A refused row of a list the form sent (a counted CSV, a drawer's lines): where and why. */
export interface RowError {
	row: number;
	column: string;
	value: string;
	message: string;
}

export interface FormFailure {
	/** Which form of the page failed (the action's name, or a form's own key); '' on a page with one form. */
	form: string;
	/** What went wrong, for the whole form ('' when the field messages say it all). */
	message: string;
	/** A message per field (dotted path for nested fields). */
	errors: Record<string, string>;
	/** The typed values, to fill the form again. */
	values: Record<string, string>;
	/** Refused rows of a list (empty for other forms). */
	rows: RowError[];
}

const NONE: FormFailure = Object.freeze({ form: '', message: '', errors: {}, values: {}, rows: [] });

/** True when a page's `form` prop is a failure (and, given `key`, of that form). */
export function isFailure(form: unknown, key?: string): form is FormFailure {
	if (!form || typeof form !== 'object') return false;
	const f = form as Partial<FormFailure>;
	return typeof f.form === 'string' && typeof f.message === 'string' && !!f.errors && !!f.values && Array.isArray(f.rows) && (key === undefined || f.form === key);
}

/** The failure of the form `key` (any form when left out) from a page's `form` prop, or an empty one. */
export function failureOf(form: unknown, key?: string): FormFailure {
	return isFailure(form, key) ? form : NONE;
}
