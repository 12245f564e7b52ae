/**
 * The OpenAPI 3.1 document served at /api/v1/openapi.json, made from the zod schemas that validate the
 * requests (`build.ts`). Each area keeps its paths in a file of its own in this folder and is listed here.
 * tests/unit/api/openapi-sync.test.ts fails when an endpoint under src/routes/api/v1 is missing from the
 * document (or the document names one that does not exist); tests/unit/api/openapi-lint.test.ts lints it
 * with Redocly; tests/integration/foundation/openapi-responses.test.ts checks real answers against it.
 */
import { errorSchema, jsonSchema, type OpenApiPaths } from './build';
import { foundationPaths } from './foundation';
import { accountsPaths } from './accounts';
import { importsPaths } from './imports';
import { cataloguePaths } from './catalogue';
import { solverPaths } from './solver';
import { purchasingPaths } from './purchasing';

const areas: OpenApiPaths[] = [foundationPaths, accountsPaths, importsPaths, cataloguePaths, solverPaths, purchasingPaths];

/** `get /parts/{id}/movements` → `getPartsIdMovements`. */
const operationId = (method: string, path: string) =>
	method + path.split(/[^A-Za-z0-9]+/).filter(Boolean).map((w) => w[0].toUpperCase() + w.slice(1)).join('');

/**
 * Adds what follows from the path: an `operationId`, and every `{name}` of the path as a record id
 * (the `id` matcher in src/params: a canonical positive integer) unless the operation names it.
 */
function withPathParameters(paths: OpenApiPaths): OpenApiPaths {
	const out: OpenApiPaths = {};
	for (const [path, ops] of Object.entries(paths)) {
		const names = [...path.matchAll(/\{([^}]+)\}/g)].map((m) => m[1]);
		out[path] = {};
		for (const [method, op] of Object.entries(ops)) {
			const given = (op.parameters as { name: string; in: string }[] | undefined) ?? [];
			const missing = names
				.filter((n) => !given.some((p) => p.in === 'path' && p.name === n))
				.map((name) => ({ name, in: 'path', required: true, schema: { type: 'integer', minimum: 1 } }));
			out[path][method] = { operationId: operationId(method, path), ...op, ...(missing.length ? { parameters: [...missing, ...given] } : {}) };
		}
	}
	return out;
}

let cached: ReturnType<typeof build> | null = null;

function build() {
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
			schemas: { Error: jsonSchema(errorSchema, 'output') }
		},
		security: [{ bearer: [] }, { session: [] }],
		paths: withPathParameters(Object.assign({}, ...areas) as OpenApiPaths)
	};
}

/** The document (built once per process: the schemas do not change while it runs). */
export function openApiDocument() {
	return (cached ??= build());
}
