import type { OpenApiPaths } from './types';
import { errors, jsonBody, jsonResponse } from './types';

const user = {
	type: 'object',
	required: ['id', 'email', 'name', 'role'],
	properties: {
		id: { type: 'integer' },
		email: { type: 'string' },
		name: { type: 'string' },
		role: { type: 'string', enum: ['admin', 'stockroom', 'engineer', 'purchaser'] }
	}
};

const tokenInfo = {
	type: 'object',
	properties: {
		id: { type: 'integer' },
		name: { type: 'string' },
		prefix: { type: 'string', description: 'first characters of the token, to tell tokens apart' },
		createdAt: { type: 'string', format: 'date-time' },
		lastUsedAt: { type: ['string', 'null'], format: 'date-time' },
		expiresAt: { type: ['string', 'null'], format: 'date-time' },
		revokedAt: { type: ['string', 'null'], format: 'date-time' },
		state: { type: 'string', enum: ['active', 'expired', 'revoked'] }
	}
};

export const accountsPaths: OpenApiPaths = {
	'/session': {
		post: {
			summary: 'Sign in (sets the session cookie)',
			security: [],
			description:
				'Throttled: after 5 failures within 15 minutes for the account or the client address, 429 with Retry-After. ' +
				'With two-step sign-in on, `secondFactorRequired` is true and the new session may only call POST /session/second-factor ' +
				'(or DELETE /session) until the code is given; other calls answer 401 `second-factor-required`.',
			requestBody: jsonBody({
				type: 'object',
				required: ['email', 'password'],
				additionalProperties: false,
				properties: { email: { type: 'string', format: 'email' }, password: { type: 'string' } }
			}),
			responses: {
				'200': jsonResponse('Signed in (with two-step sign-in: half signed in)', {
					type: 'object',
					properties: { user, secondFactorRequired: { type: 'boolean' } }
				}),
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
			requestBody: jsonBody({
				type: 'object',
				required: ['code'],
				additionalProperties: false,
				properties: { code: { type: 'string', pattern: '^[0-9 ]{6,7}$', description: '6 digits from the authenticator app' } }
			}),
			responses: { '200': jsonResponse('Signed in', { type: 'object', properties: { user } }), ...errors(400, 401, 409, 415, 429) }
		}
	},
	'/me': {
		get: {
			summary: 'The signed-in user',
			responses: {
				'200': jsonResponse('Who is signed in', {
					type: 'object',
					properties: { user, authVia: { type: 'string', enum: ['session', 'token'] } }
				}),
				...errors(401)
			}
		}
	},
	'/tokens': {
		get: {
			summary: 'My API tokens (without secrets)',
			responses: { '200': jsonResponse('Tokens', { type: 'object', properties: { items: { type: 'array', items: tokenInfo } } }), ...errors(401) }
		},
		post: {
			summary: 'Create an API token (shown once)',
			description:
				'Needs a session (not a token) and the current password; otherwise 403. Wrong passwords count per user ' +
				'(with password changes and turning two-step sign-in off): the 6th within 15 minutes gets 429 with Retry-After.',
			security: [{ session: [] }],
			requestBody: jsonBody({
				type: 'object',
				required: ['name', 'password'],
				additionalProperties: false,
				properties: {
					name: { type: 'string', maxLength: 80 },
					expiresInDays: { type: 'integer', minimum: 0, maximum: 3650, description: '0 or absent: no expiry' },
					password: { type: 'string', description: 'the current password' }
				}
			}),
			responses: {
				'201': jsonResponse('The new token; `token` is never shown again', {
					type: 'object',
					properties: { id: { type: 'integer' }, token: { type: 'string' }, name: { type: 'string' }, prefix: { type: 'string' }, expiresAt: { type: ['string', 'null'] } }
				}),
				...errors(400, 401, 403, 415, 429)
			}
		}
	},
	'/tokens/{id}': {
		delete: {
			summary: 'Revoke an API token (yours; an administrator: anyone’s)',
			parameters: [{ name: 'id', in: 'path', required: true, schema: { type: 'integer' } }],
			responses: { '204': { description: 'Revoked' }, ...errors(400, 401, 403, 404) }
		}
	},
	'/outbox': {
		get: {
			summary: 'Mail captured by the local mail fake (administrators)',
			description: 'Administrators with two-step sign-in only: a session that gave the code, or a token whose owner has it on (else 403 `second-factor-not-set-up`).',
			parameters: [
				{ name: 'to', in: 'query', schema: { type: 'string' }, description: 'recipient contains' },
				{ name: 'limit', in: 'query', schema: { type: 'integer', minimum: 1, maximum: 500, default: 100 } }
			],
			responses: {
				'200': jsonResponse('Messages, newest first', {
					type: 'object',
					properties: {
						items: {
							type: 'array',
							items: {
								type: 'object',
								properties: {
									id: { type: 'integer' },
									from: { type: 'string' },
									to: { type: 'string' },
									subject: { type: 'string' },
									text: { type: ['string', 'null'] },
									sizeBytes: { type: 'integer' },
									receivedAt: { type: 'string', format: 'date-time' }
								}
							}
						}
					}
				}),
				...errors(400, 401, 403)
			}
		}
	}
};
