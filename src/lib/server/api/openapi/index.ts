/**
 * The OpenAPI 3.1 document served at /api/v1/openapi.json. Each area keeps its paths in a file of
 * its own in this folder and is listed here; tests/unit/api/openapi-sync.test.ts fails when an
 * endpoint under src/routes/api/v1 is missing from the document (or the document names one that does not exist).
 */
import type { OpenApiPaths } from './types';
import { foundationPaths } from './foundation';
import { accountsPaths } from './accounts';
import { importsPaths } from './imports';
import { cataloguePaths } from './catalogue';
import { solverPaths } from './solver';
import { purchasingPaths } from './purchasing';

const areas: OpenApiPaths[] = [foundationPaths, accountsPaths, importsPaths, cataloguePaths, solverPaths, purchasingPaths];

export function openApiDocument() {
	return {
		openapi: '3.1.0',
		info: {
			title: 'Glasscrib API',
			version: '1',
			description:
				'JSON API of Glasscrib. Authenticate with the session cookie or `Authorization: Bearer <token>`. ' +
				'Errors: `{ "error": { "code", "message", "fields"? } }` with 400, 401, 403, 404, 409, 415, 429 or 503.'
		},
		servers: [{ url: '/api/v1' }],
		components: {
			securitySchemes: {
				bearer: { type: 'http', scheme: 'bearer' },
				session: { type: 'apiKey', in: 'cookie', name: 'gc_session' }
			},
			schemas: {
				Error: {
					type: 'object',
					required: ['error'],
					properties: {
						error: {
							type: 'object',
							required: ['code', 'message'],
							properties: {
								code: { type: 'string' },
								message: { type: 'string' },
								fields: { type: 'object', additionalProperties: { type: 'string' } }
							}
						}
					}
				}
			}
		},
		security: [{ bearer: [] }, { session: [] }],
		paths: Object.assign({}, ...areas) as OpenApiPaths
	};
}
