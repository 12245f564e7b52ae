import { json } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, errorResponse, readJson } from '$lib/server/api/http';
import { DomainError } from '$lib/server/errors';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';
import * as apiTokens from '$lib/server/accounts/api-tokens';
import { recheckPassword, recheckRefusal } from '$lib/server/accounts/passwords';

/** The signed-in user's tokens (never the secrets). */
export const GET = endpoint(async (event) => {
	const user = requireRole(event, ANY_ROLE);
	const items = await apiTokens.list(db, user.id);
	return json({ items });
}) satisfies RequestHandler;

/**
 * Creates a token: `{ name, expiresInDays?, password }` → `{ id, token, ... }` (the token is shown
 * this once). Needs a session and the current password; a token cannot mint tokens (403).
 */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, ANY_ROLE);
	if (event.locals.authVia !== 'session') throw new DomainError(403, 'session-required', 'Create tokens from a signed-in session, not with a token.');
	const input = apiTokens.createTokenSchema.parse(await readJson(event.request));
	if (!input.password) throw new DomainError(403, 'password-required', 'Confirm with your current password.', { password: 'Enter your current password.' });
	// Wrong passwords count in the user's re-check bucket: the 6th within 15 minutes gets 429.
	const check = await recheckPassword(db, user.id, input.password, env.AUTH_PEPPER);
	if (!check.ok && check.reason === 'throttled') {
		return errorResponse(429, 'too-many-attempts', recheckRefusal(check), undefined, { 'Retry-After': String(check.retryAfterSeconds) });
	}
	if (!check.ok) throw new DomainError(403, 'password-required', 'Confirm with your current password.', { password: recheckRefusal(check) });
	const created = await apiTokens.create(db, user, input);
	return json(created, { status: 201 });
}) satisfies RequestHandler;
