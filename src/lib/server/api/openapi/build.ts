/**
 * How the OpenAPI document is made: request bodies and query parameters are the JSON Schema of the
 * zod schemas that validate them (zod 4's `z.toJSONSchema`, input side: defaults, coercions and
 * optional fields as a client sends them), responses the JSON Schema of zod shapes of the answers
 * (output side). Nothing here validates; it only describes.
 */
import { z } from 'zod';

export type JsonSchema = { [key: string]: unknown };

/** One operation, keyed in `OpenApiPaths` by lower-case method. */
export type Operation = { summary: string; [key: string]: unknown };

/** Paths of one area, keyed by the path under /api/v1 (e.g. "/parts/{id}"), then by lower-case method. */
export type OpenApiPaths = Record<string, Record<string, Operation>>;

/**
 * `anyOf: [{type: X, …}, {type: 'null'}]` (zod's `.nullable()`) as `{type: [X, 'null'], …}`: the same
 * schema in JSON Schema 2020-12, shorter, and what readers of the document (the fuzz suite) look for.
 */
function tidy(node: unknown): unknown {
	if (Array.isArray(node)) return node.map(tidy);
	if (!node || typeof node !== 'object') return node;
	const out: JsonSchema = {};
	for (const [k, v] of Object.entries(node)) out[k] = tidy(v);
	const any = out.anyOf as JsonSchema[] | undefined;
	if (Array.isArray(any) && any.length === 2) {
		const nullAt = any.findIndex((s) => s.type === 'null' && Object.keys(s).length === 1);
		const other = any[1 - nullAt];
		if (nullAt >= 0 && typeof other?.type === 'string' && !('enum' in other) && !('const' in other)) {
			const { anyOf: _, ...rest } = out;
			return { ...rest, ...other, type: [other.type, 'null'] };
		}
	}
	return out;
}

/** The JSON Schema of a zod schema: `input` for what a client sends, `output` for what the API answers. */
export function jsonSchema(schema: z.ZodType, io: 'input' | 'output' = 'input'): JsonSchema {
	const { $schema: _, ...rest } = z.toJSONSchema(schema, { target: 'draft-2020-12', io, unrepresentable: 'any', reused: 'inline' }) as JsonSchema;
	return tidy(rest) as JsonSchema;
}

/** A required JSON request body validated by `schema`. */
export const jsonBody = (schema: z.ZodType) => ({ required: true, content: { 'application/json': { schema: jsonSchema(schema) } } });

/** The query parameters of a zod object (the one that parses `url.searchParams`). */
export function queryParams(schema: z.ZodType, descriptions: Record<string, string> = {}) {
	const s = jsonSchema(schema);
	const required = (s.required as string[] | undefined) ?? [];
	return Object.entries((s.properties ?? {}) as Record<string, JsonSchema>).map(([name, schema]) => ({
		name,
		in: 'query',
		required: required.includes(name),
		schema,
		...(schema.type === 'array' ? { style: 'form', explode: false } : {}),
		...(descriptions[name] ? { description: descriptions[name] } : {})
	}));
}

/** A JSON response whose body has the shape `schema` (or any object). */
export const jsonResponse = (description: string, schema?: z.ZodType) => ({
	description,
	content: { 'application/json': { schema: schema ? jsonSchema(schema, 'output') : { type: 'object' } } }
});

/** A response of bytes of a media type (`text/csv`, `image/png`, …). */
export const bytesResponse = (description: string, mediaType: string) => ({
	description,
	content: { [mediaType]: { schema: mediaType.startsWith('text/') ? { type: 'string' } : { type: 'string', format: 'binary' } } }
});

/** A multipart upload: the file in `file`, with other text fields. */
export const multipartBody = (fileDescription: string, fields: Record<string, JsonSchema> = {}) => ({
	required: true,
	content: {
		'multipart/form-data': {
			schema: { type: 'object', required: ['file'], properties: { file: { type: 'string', format: 'binary', description: fileDescription }, ...fields } }
		}
	}
});

/** The usual error responses, each the `Error` schema. */
export const errors = (...statuses: number[]) =>
	Object.fromEntries(
		statuses.map((s) => [String(s), { description: `error ${s}`, content: { 'application/json': { schema: { $ref: '#/components/schemas/Error' } } } }])
	);

/** The error body every endpoint answers with (`api/http.ts`). */
export const errorSchema = z.object({
	error: z.object({ code: z.string(), message: z.string(), fields: z.record(z.string(), z.string()).optional() })
});
