import { isHttpError, json, type RequestEvent, type RequestHandler } from '@sveltejs/kit';
import { ZodError } from 'zod';
import { badTextReason } from '$lib/input';
import { INPUT_ERRNOS, dbErrno, isRetryable, isUnavailable } from '$lib/server/db/errno';
import { duplicateOf } from '$lib/server/db/unique';
import { DomainError, zodFields } from '$lib/server/errors';

const CODES: Record<number, string> = {
	400: 'bad-request',
	401: 'unauthenticated',
	403: 'forbidden',
	404: 'not-found',
	405: 'method-not-allowed',
	409: 'conflict',
	413: 'too-large',
	415: 'unsupported-media-type',
	429: 'too-many-requests',
	503: 'unavailable'
};

/** The API's error response. */
export function errorResponse(
	status: number,
	code: string,
	message: string,
	fields?: Record<string, string>,
	headers?: HeadersInit
): Response {
	return json({ error: fields ? { code, message, fields } : { code, message } }, { status, headers });
}

/** Turns anything thrown inside an API handler into the API's error shape. */
export function toErrorResponse(err: unknown): Response {
	if (err instanceof DomainError) {
		return errorResponse(err.status, err.code, err.message, err.fields);
	}
	if (err instanceof ZodError) {
		return errorResponse(400, 'invalid-input', 'Some fields are not valid.', zodFields(err));
	}
	const dup = duplicateOf(err);
	if (dup) return errorResponse(409, dup.code, dup.message, dup.fields);
	const errno = dbErrno(err);
	if (errno !== undefined && INPUT_ERRNOS.has(errno)) {
		console.warn('[api] the database refused a value the validation let through:', err instanceof Error ? err.message.slice(0, 300) : err);
		return errorResponse(400, 'invalid-input', 'A value cannot be stored (wrong characters, too long or out of range).');
	}
	if (isUnavailable(err)) {
		console.error('[api] the database is not reachable:', err instanceof Error ? err.message : err);
		return errorResponse(503, 'database-unavailable', 'The database cannot be reached just now; try again in a moment.', undefined, { 'Retry-After': '5' });
	}
	if (isRetryable(err)) {
		// Deadlock or lock wait still failing after inTransaction's retries: busy, not broken.
		return errorResponse(503, 'busy', 'The stockroom is busy; try again in a moment.', undefined, { 'Retry-After': '1' });
	}
	if (isHttpError(err)) {
		const body = err.body as App.Error;
		return errorResponse(err.status, body.code ?? CODES[err.status] ?? 'error', body.message);
	}
	throw err; // unexpected: handleError logs it and answers 500
}

/** Wraps an API handler so that every expected failure gets the JSON error shape. */
export function endpoint<E extends RequestEvent>(handler: (event: E) => Promise<Response> | Response) {
	return (async (event: E) => {
		try {
			return await handler(event);
		} catch (err) {
			return toErrorResponse(err);
		}
	}) as unknown as RequestHandler;
}

/** Reads a JSON body; 415 when the request is not JSON, 400 when it is not UTF-8, does not parse or fails `checkJsonBody`. */
export async function readJson(request: Request): Promise<unknown> {
	const type = request.headers.get('content-type') ?? '';
	if (!type.toLowerCase().startsWith('application/json')) {
		throw new DomainError(415, 'unsupported-media-type', 'Send the body as application/json.');
	}
	let body: unknown;
	let text: string;
	try {
		// fatal: bytes that are not UTF-8 are refused, not turned into U+FFFD and stored.
		text = new TextDecoder('utf-8', { fatal: true }).decode(await request.arrayBuffer());
	} catch {
		throw new DomainError(400, 'invalid-json', 'The body is not valid UTF-8.');
	}
	try {
		body = JSON.parse(text);
	} catch {
		throw new DomainError(400, 'invalid-json', 'The body is not valid JSON.');
	}
	checkJsonBody(body);
	return body;
}

/** How deep a JSON body may nest (no request of ours needs more than a few levels). */
export const MAX_JSON_DEPTH = 32;

/**
 * Refuses a parsed JSON body that nests deeper than MAX_JSON_DEPTH or holds text that cannot be
 * stored (NUL and other control characters, lone surrogates: `badTextReason`), in keys or values,
 * with a 400 naming the field. Iterative, so a hostile depth cannot overflow the stack.
 */
export function checkJsonBody(body: unknown): void {
	const stack: { value: unknown; path: string; depth: number }[] = [{ value: body, path: '', depth: 0 }];
	while (stack.length) {
		const { value, path, depth } = stack.pop()!;
		if (typeof value === 'string') {
			const reason = badTextReason(value);
			if (reason) throw new DomainError(400, 'invalid-text', `${path || 'The body'}: ${reason}`, { [path || '_']: reason });
			continue;
		}
		if (value === null || typeof value !== 'object') continue;
		if (depth >= MAX_JSON_DEPTH) throw new DomainError(400, 'too-deep', `The body nests deeper than ${MAX_JSON_DEPTH} levels.`, { [path || '_']: 'Nested too deeply.' });
		for (const [key, child] of Object.entries(value)) {
			const childPath = path ? `${path}.${key}` : key;
			const reason = badTextReason(key);
			if (reason) throw new DomainError(400, 'invalid-text', `A field name: ${reason}`, { _: reason });
			stack.push({ value: child, path: childPath, depth: depth + 1 });
		}
	}
}
