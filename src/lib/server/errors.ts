/**
 * The one error tree of the server. Services throw a `DomainError` (or a subclass) for every expected
 * failure: it carries the HTTP status, a stable code, a message a person can read and, where a field is
 * to blame, a message per field (dotted path for nested fields). This module imports nothing at run time, so any
 * layer may throw these without reaching for the HTTP layer. The API answers them with
 * `{ "error": { code, message, fields? } }` (`api/http.endpoint`), form actions with one failure shape
 * (`failFrom` in `$lib/server/form-failure`).
 */
import type { ZodError } from 'zod';

export class DomainError extends Error {
	constructor(
		readonly status: number,
		readonly code: string,
		message: string,
		readonly fields?: Record<string, string>
	) {
		super(message);
	}
}

/** 404: the record named does not exist (or is not the caller's to see). */
export class NotFound extends DomainError {
	constructor(message: string, code = 'not-found') {
		super(404, code, message);
	}
}

/** 400: the input is refused; `fields` names the fields to blame. */
export class InvalidInput extends DomainError {
	constructor(message: string, fields?: Record<string, string>, code = 'invalid-input') {
		super(400, code, message, fields);
	}
}

/** 409: the request conflicts with the state of the records (not enough stock, a duplicate, a step not allowed). */
export class Conflict extends DomainError {
	constructor(code: string, message: string, fields?: Record<string, string>) {
		super(409, code, message, fields);
	}
}

/** Field messages from a zod error, keyed by dotted path. */
export function zodFields(err: Pick<ZodError, 'issues'>): Record<string, string> {
	const fields: Record<string, string> = {};
	for (const issue of err.issues) {
		const key = issue.path.length ? issue.path.join('.') : '_';
		if (!fields[key]) fields[key] = issue.message;
	}
	return fields;
}
