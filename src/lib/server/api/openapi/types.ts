/** Paths of one area, keyed by the path under /api/v1 (e.g. "/parts/{id}"), then by lower-case method. */
export type OpenApiPaths = Record<string, Record<string, { summary: string; [key: string]: unknown }>>;

/** A JSON request body with the given schema. */
export const jsonBody = (schema: unknown) => ({ required: true, content: { 'application/json': { schema } } });

/** A JSON response with the given schema. */
export const jsonResponse = (description: string, schema: unknown = { type: 'object' }) => ({
	description,
	content: { 'application/json': { schema } }
});

/** The usual error responses. */
export const errors = (...statuses: number[]) =>
	Object.fromEntries(
		statuses.map((s) => [String(s), { description: `error ${s}`, content: { 'application/json': { schema: { $ref: '#/components/schemas/Error' } } } }])
	);
