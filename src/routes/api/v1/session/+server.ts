import { json } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, errorResponse, readJson } from '$lib/server/api/http';
import { DomainError } from '$lib/server/errors';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, PUBLIC } from '$lib/roles';
import { endSession, startSession } from '$lib/server/auth/sessions';
import { attemptSignin, INVALID_CREDENTIALS, signinSchema, throttledMessage } from '$lib/server/accounts/signin';

/**
 * Signs in: `{ email, password }` → `{ user, secondFactorRequired }` and the session cookie. Throttled
 * (429 + Retry-After). With two-step sign-in on, `secondFactorRequired` is true and the session can do
 * nothing but `POST /api/v1/session/second-factor` (or sign out) until the code is given.
 */
export const POST = endpoint(async (event) => {
	requireRole(event, PUBLIC);
	const input = signinSchema.parse(await readJson(event.request));
	const result = await attemptSignin(db, { ...input, clientAddress: event.getClientAddress(), pepper: env.AUTH_PEPPER });
	if (!result.ok && result.reason === 'throttled') {
		return errorResponse(429, 'too-many-attempts', throttledMessage(result.retryAfterSeconds), undefined, {
			'Retry-After': String(result.retryAfterSeconds)
		});
	}
	if (!result.ok) throw new DomainError(401, 'invalid-credentials', INVALID_CREDENTIALS);
	await startSession(result.user.id, event.cookies, event.request.headers.get('user-agent'));
	const { id, email, name, role } = result.user;
	return json({ user: { id, email, name, role }, secondFactorRequired: result.user.totpEnabledAt !== null });
}) satisfies RequestHandler;

/** Signs out: ends the session on the server and clears the cookie. */
export const DELETE = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	if (!event.locals.session) throw new DomainError(400, 'no-session', 'This request is signed with a token, not a session; revoke the token instead.');
	await endSession(event.locals.session, event.cookies);
	return new Response(null, { status: 204 });
}) satisfies RequestHandler;
