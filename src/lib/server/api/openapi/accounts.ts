/** OpenAPI paths of accounts: session, second factor, the signed-in user, API tokens, the Outbox. */
import { z } from 'zod';
import { ROLES } from '$lib/server/db/schema';
import { signinSchema } from '$lib/server/accounts/signin';
import { codeSchema } from '$lib/server/accounts/two-step';
import { createTokenSchema } from '$lib/server/accounts/api-tokens';
import { outboxQuerySchema } from '$lib/server/accounts/outbox';
import { errors, jsonBody, jsonResponse, queryParams, type OpenApiPaths } from './build';

const int = z.number().int();
const dateTime = z.string().meta({ format: 'date-time' });
const user = z.looseObject({ id: int, email: z.string(), name: z.string(), role: z.enum(ROLES) });

const tokenInfo = z.looseObject({
	id: int,
	name: z.string(),
	prefix: z.string().describe('first characters of the token, to tell tokens apart'),
	createdAt: dateTime,
	lastUsedAt: dateTime.nullable(),
	expiresAt: dateTime.nullable(),
	revokedAt: dateTime.nullable(),
	state: z.enum(['active', 'expired', 'revoked'])
});

const message = z.looseObject({
	id: int,
	from: z.string(),
	to: z.string(),
	subject: z.string(),
	text: z.string().nullable(),
	sizeBytes: int,
	receivedAt: dateTime
});

export const accountsPaths: OpenApiPaths = {
	'/session': {
		post: {
			summary: 'Sign in (sets the session cookie)',
			security: [],
			description:
				'Throttled: after 5 failures within 15 minutes for the account or the client address, 429 with Retry-After. ' +
				'With two-step sign-in on, `secondFactorRequired` is true and the new session may only call POST /session/second-factor ' +
				'(or DELETE /session) until the code is given; other calls answer 401 `second-factor-required`.',
			requestBody: jsonBody(signinSchema),
			responses: {
				'200': jsonResponse('Signed in (with two-step sign-in: half signed in)', z.looseObject({ user, secondFactorRequired: z.boolean() })),
				...errors(400, 401, 415, 429)
			}
		},
		delete: {
			summary: 'Sign out (ends the session on the server)',
			security: [{ session: [] }],
			responses: { '204': { description: 'Signed out' }, ...errors(400, 401, 403) }
		}
	},
	'/session/second-factor': {
		post: {
			summary: 'Give the two-step sign-in code (second step of signing in)',
			description:
				'For a session that POST /session left half signed in. On success the session is replaced by a new one (new cookie). ' +
				'A code works once (401 `used-code`); wrong codes: 401 `wrong-code`, 5 in 15 minutes per user → 429 with Retry-After. ' +
				'409 `no-code-needed` for a session that needs none; 400 `no-session` with a token.',
			security: [{ session: [] }],
			requestBody: jsonBody(codeSchema),
			responses: { '200': jsonResponse('Signed in', z.looseObject({ user })), ...errors(400, 401, 409, 415, 429) }
		}
	},
	'/me': {
		get: {
			summary: 'The signed-in user',
			responses: { '200': jsonResponse('Who is signed in', z.looseObject({ user, authVia: z.enum(['session', 'token']) })), ...errors(401) }
		}
	},
	'/tokens': {
		get: {
			summary: 'My API tokens (without secrets)',
			responses: { '200': jsonResponse('Tokens', z.looseObject({ items: z.array(tokenInfo) })), ...errors(401) }
		},
		post: {
			summary: 'Create an API token (shown once)',
			description:
				'Needs a session (not a token) and the current password (`password`); otherwise 403. `expiresInDays` 0 or absent: no expiry. ' +
				'Wrong passwords count per user (with password changes and turning two-step sign-in off): the 6th within 15 minutes gets 429 with Retry-After.',
			security: [{ session: [] }],
			requestBody: jsonBody(createTokenSchema),
			responses: {
				'201': jsonResponse(
					'The new token; `token` is never shown again',
					z.looseObject({ id: int, token: z.string(), name: z.string(), prefix: z.string(), expiresAt: dateTime.nullable() })
				),
				...errors(400, 401, 403, 415, 429)
			}
		}
	},
	'/tokens/{id}': {
		delete: { summary: 'Revoke an API token (yours; an administrator: anyone’s)', responses: { '204': { description: 'Revoked' }, ...errors(400, 401, 403, 404) } }
	},
	'/outbox': {
		get: {
			summary: 'Mail captured by the local mail fake (administrators)',
			description:
				'Administrators with two-step sign-in only: a session that gave the code, or a token whose owner has it on (else 403 `second-factor-not-set-up`).',
			parameters: queryParams(outboxQuerySchema, { to: 'recipient contains' }),
			responses: { '200': jsonResponse('Messages, newest first', z.looseObject({ items: z.array(message) })), ...errors(400, 401, 403) }
		}
	}
};
