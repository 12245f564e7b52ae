import { json } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, errorResponse, readJson } from '$lib/server/api/http';
import { DomainError } from '$lib/server/errors';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';
import { completeSecondFactor } from '$lib/server/auth/sessions';
import * as twoStep from '$lib/server/accounts/two-step';

/**
 * The second step of an API sign-in: `{ code }` (6 digits) for a session that `POST /api/v1/session`
 * left half signed in. On success the session is replaced by a new one (new cookie). Wrong codes are
 * throttled per user (5 in 15 minutes → 429 + Retry-After); a code works once.
 */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, ANY_ROLE);
	const session = event.locals.session;
	if (!session) throw new DomainError(400, 'no-session', 'A token needs no two-step code; sign in with POST /api/v1/session first.');
	if (event.locals.secondFactor !== 'pending') throw new DomainError(409, 'no-code-needed', 'This session needs no two-step code (already given, or two-step sign-in is off).');
	const input = twoStep.codeSchema.parse(await readJson(event.request));
	const result = await twoStep.verifySignin(db, user.id, input.code, env.AUTH_PEPPER);
	if (!result.ok) {
		if (result.reason === 'throttled') {
			return errorResponse(429, 'too-many-attempts', twoStep.refusalText(result), undefined, { 'Retry-After': String(result.retryAfterSeconds) });
		}
		throw new DomainError(401, result.reason, twoStep.refusalText(result));
	}
	await completeSecondFactor(session, user.id, event.cookies, event.request.headers.get('user-agent'));
	const { id, email, name, role } = user;
	return json({ user: { id, email, name, role } });
}) satisfies RequestHandler;
