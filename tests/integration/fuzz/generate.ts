/**
 * Malformed requests for one target, from a seeded generator (mulberry32). Each request belongs to a
 * class; `refused: true` classes are invalid by construction (the server must answer 4xx, never 2xx
 * or 3xx), the others (query strings on reads, garbage in form fields) must only never give a 5xx.
 *
 * Writes are always refused by construction, so a run changes nothing in the shared database except
 * what garbage in a form may create (cleaned up by the suite).
 */
import type { Target } from './targets';

export type Rnd = () => number;

export interface FuzzRequest {
	cls: string;
	refused: boolean;
	method: string;
	path: string;
	headers: Record<string, string>;
	body?: Uint8Array | string;
	/** A form post sent as `use:enhance` sends it (the answer is JSON with the action's status). */
	enhanced?: boolean;
}

/** An OpenAPI schema, as far as the generator reads it. */
export interface Schema {
	$ref?: string;
	type?: string | string[];
	enum?: unknown[];
	properties?: Record<string, Schema>;
	required?: string[];
	additionalProperties?: boolean | Schema;
	items?: Schema;
	oneOf?: Schema[];
	anyOf?: Schema[];
	allOf?: Schema[];
}

const pick = <T>(rnd: Rnd, xs: readonly T[]): T => xs[Math.floor(rnd() * xs.length)];

export const INJECTIONS = [
	"' OR 1=1 --",
	'"; DROP TABLE parts; --',
	"1' UNION SELECT password_hash FROM users --",
	'<script>alert(1)</script>',
	'<img src=x onerror=alert(1)>',
	'=HYPERLINK("http://evil.example","x")',
	'{{7*7}}',
	'${process.exit(1)}',
	'import("node:child_process")',
	'%s%s%s%n',
	'\r\nBcc: victim@evil.example',
	'$where: 1',
	'\\x00',
	'SLEEP(5)'
];
export const TRAVERSALS = ['../../../etc/passwd', '..\\..\\windows\\win.ini', '/etc/shadow', '....//....//etc/passwd', '%2e%2e%2f%2e%2e%2fetc%2fpasswd', 'C:\\boot.ini', 'datasheets/../../secret'];
const BAD_TEXT = ['\ud800', 'a\udc00b', '\udbff', 'x\u0000y', '\u0000', 'bell\u0007', '\u001b[31mred'];
/** Bytes that are not UTF-8: a stray continuation byte, a cut sequence, an overlong slash, a surrogate's encoding. */
const BAD_UTF8 = [[0x80], [0xc3, 0x28], [0xe2, 0x82], [0xc0, 0xaf], [0xed, 0xa0, 0x80], [0xff, 0xfe], [0xf8, 0x88, 0x80, 0x80, 0x80]];
const WRONG_FOR_STRING = [123, -1, true, {}, [], { $ne: null }, [['nested']]];
const WRONG_FOR_NUMBER = ['twelve', '12abc', true, {}, [1], { $gt: 0 }, ''];
/**
 * Garbage for form fields: no plausible id (small integers could name real records, e.g. a user an admin action
 * deactivates) and no in-range number. Hex ("0x10") is sent in paths and queries, not here, for that reason.
 */
const FORM_GARBAGE = [
	'',
	'-1',
	'1e999',
	'-1e999',
	'NaN',
	'Infinity',
	'0x',
	'99999999',
	'1.5e308',
	'9007199254740993',
	'2026-02-30',
	'-000001-01-01',
	'not-an-option',
	'true',
	'[]',
	'{"a":1}',
	'x'.repeat(5000),
	'🔭'.repeat(300),
	...INJECTIONS,
	...TRAVERSALS
];
const QUERY_KEYS = ['page', 'pageSize', 'q', 'sort', 'order', 'kind', 'eflMin', 'eflMax', 'diameterMin', 'partId', 'locationId', 'mine', 'active', 'limit', 'offset', 'errors', 'wavelengthNm', 'hide', 'redirectTo', 'status', 'available', 'archived', 'from', 'to', 'format'];
const QUERY_VALUES = [
	'Infinity',
	'-Infinity',
	'NaN',
	'1e999',
	'-1',
	'0',
	'1.5',
	'0x10',
	'99999999999999999999999',
	'%00',
	'a%00b',
	'%ED%A0%80',
	'%FF%FE',
	'%C0%AF',
	'',
	'%20',
	'x'.repeat(3000),
	...[...INJECTIONS, ...TRAVERSALS].map(encodeURIComponent),
	'//evil.example',
	'https://evil.example/',
	'javascript:alert(1)'
];
// Not '%2e%2e' alone: the URL parser (client and server alike) reads it as '..' and sends the parent path, so it
// never reaches the route's parameter (a POST there meets SvelteKit's trailing-slash 308 instead).
const PATH_VALUES = ['%201', '1%20', '0x10', '1e3', '01', '-1', '0', '1.5', '+1', '99999999999999999999999', '%00', '1%00', '..%2F..%2Fetc%2Fpasswd', 'NaN', 'Infinity', '%ED%A0%80', '%FF', "1'%20OR%20'1'%3D'1", '%3Cscript%3E', '1,2', '1;2', '[1]'];

export function resolve(schema: Schema | undefined, doc: { components?: { schemas?: Record<string, Schema> } }, depth = 0): Schema {
	if (!schema || depth > 8) return {};
	if (schema.$ref) return resolve(doc.components?.schemas?.[schema.$ref.split('/').pop()!], doc, depth + 1);
	if (schema.allOf?.length) return resolve(schema.allOf[0], doc, depth + 1);
	if (schema.oneOf?.length) return resolve(schema.oneOf[0], doc, depth + 1);
	if (schema.anyOf?.length) return resolve(schema.anyOf[0], doc, depth + 1);
	return schema;
}

const typesOf = (s: Schema): string[] => (Array.isArray(s.type) ? s.type : s.type ? [s.type] : []);
const jsonTypeOf = (v: unknown) => (v === null ? 'null' : Array.isArray(v) ? 'array' : typeof v === 'number' ? (Number.isInteger(v) ? 'integer' : 'number') : typeof v);

/** A value of the right type that names nothing real (ids that do not exist, a dummy text). */
function plausible(s: Schema): unknown {
	if (s.enum?.length) return s.enum[0];
	const types = typesOf(s);
	if (types.includes('integer')) return 99_999_999;
	if (types.includes('number')) return 1;
	if (types.includes('boolean')) return false;
	if (types.includes('array')) return [];
	if (types.includes('object')) return {};
	if (types.includes('string')) return 'fuzz';
	return null;
}

interface Body {
	/** The JSON text, with placeholders replaced by raw text (numbers JSON.stringify cannot write). */
	text: string;
	bytes?: Uint8Array;
}

/** Builds a body: the required fields plausible, then `mutate` changes the object; placeholders become raw JSON. */
function objectBody(props: Record<string, Schema>, required: string[], mutate: (o: Record<string, unknown>) => void, raw: Record<string, string> = {}): Body {
	const o: Record<string, unknown> = {};
	for (const k of required) if (props[k]) o[k] = plausible(props[k]);
	mutate(o);
	let text = JSON.stringify(o);
	for (const [placeholder, value] of Object.entries(raw)) text = text.replace(JSON.stringify(placeholder), value);
	return { text };
}

function deep(depth: number, rnd: Rnd): string {
	const open = rnd() < 0.5 ? '[' : '{"a":';
	const close = open === '[' ? ']' : '}';
	return open.repeat(depth) + '1' + close.repeat(depth);
}

function withBadBytes(text: string, placeholder: string, bytes: number[]): Uint8Array {
	const i = text.indexOf(placeholder);
	const enc = new TextEncoder();
	return new Uint8Array([...enc.encode(text.slice(0, i)), ...bytes, ...enc.encode(text.slice(i + placeholder.length))]);
}

/** A JSON body for a write endpoint, invalid by construction, of class `cls`. */
function jsonBody(cls: string, rnd: Rnd, schema: Schema): Body {
	const props = schema.properties ?? {};
	const names = Object.keys(props);
	const required = (schema.required ?? []).filter((k) => props[k]);
	const strict = schema.additionalProperties === false;
	const byType = (pred: (s: Schema) => boolean) => names.filter((n) => pred(props[n]));
	const stringFields = byType((s) => typesOf(s).includes('string') && !s.enum);
	const numberFields = byType((s) => (typesOf(s).includes('number') || typesOf(s).includes('integer')) && !typesOf(s).includes('string'));
	const enumFields = byType((s) => !!s.enum?.length);
	const topLevelWrong = (): Body => ({ text: JSON.stringify(pick(rnd, [[], 'text', 42, null, true, [{}]])) });
	// An invalid value for some field: an enum, a number (wrong type), or an unknown key of a strict object.
	const misplace = (value: string): Body => {
		if (enumFields.length) return objectBody(props, required, (o) => (o[pick(rnd, enumFields)] = value));
		if (numberFields.length) return objectBody(props, required, (o) => (o[pick(rnd, numberFields)] = value));
		if (strict) return objectBody(props, required, (o) => (o[value] = 1));
		return { text: JSON.stringify(value) };
	};
	switch (cls) {
		case 'wrong-type': {
			if (!names.length) return topLevelWrong();
			const field = pick(rnd, names);
			const allowed = typesOf(props[field]);
			if (!allowed.length) return topLevelWrong();
			const pool = (allowed.includes('string') ? WRONG_FOR_STRING : WRONG_FOR_NUMBER).filter((v) => {
				const t = jsonTypeOf(v);
				return !allowed.includes(t) && !(t === 'integer' && allowed.includes('number')) && !(props[field].enum ?? []).includes(v);
			});
			return pool.length ? objectBody(props, required, (o) => (o[field] = pick(rnd, pool))) : topLevelWrong();
		}
		case 'missing-field': {
			if (!required.length) return topLevelWrong();
			const drop = pick(rnd, required);
			return objectBody(props, required, (o) => delete o[drop]);
		}
		case 'non-finite': {
			const value = pick(rnd, ['1e999', '-1e999', '1e400', '-1e309']);
			if (numberFields.length) return objectBody(props, required, (o) => (o[pick(rnd, numberFields)] = '__NUM__'), { __NUM__: value });
			return { text: value };
		}
		case 'deep-json': {
			const depth = pick(rnd, [40, 300, 5000, 100_000]);
			if (names.length && rnd() < 0.5) return objectBody(props, required, (o) => (o[pick(rnd, names)] = '__DEEP__'), { __DEEP__: deep(depth, rnd) });
			return { text: deep(depth, rnd) };
		}
		case 'bad-text': {
			const bad = pick(rnd, BAD_TEXT);
			if (stringFields.length && rnd() < 0.8) return objectBody(props, required, (o) => (o[pick(rnd, stringFields)] = `fuzz${bad}`));
			return objectBody(props, required, (o) => (o[`key${bad}`] = 'x'));
		}
		case 'invalid-utf8': {
			const body = stringFields.length ? objectBody(props, required, (o) => (o[pick(rnd, stringFields)] = '__BAD__')) : { text: '"__BAD__"' };
			return { text: body.text, bytes: withBadBytes(body.text, '__BAD__', pick(rnd, BAD_UTF8)) };
		}
		case 'injection':
			return misplace(pick(rnd, INJECTIONS));
		case 'traversal':
			return misplace(pick(rnd, TRAVERSALS));
		case 'unknown-enum':
			return enumFields.length ? objectBody(props, required, (o) => (o[pick(rnd, enumFields)] = `not-a-${pick(rnd, ['kind', 'state', 'role', 'x'])}-${Math.floor(rnd() * 1e6)}`)) : misplace('not-an-option');
		case 'not-json':
			return { text: pick(rnd, ['{"a":', '{a:1}', "{'a':1}", '', '[1,]', 'NaN', '{"a":1}}', '\u0000', '{"a":"\\x41"}', '{"a":01}']) };
		default:
			throw new Error(`unknown class ${cls}`);
	}
}

const JSON_CLASSES = ['wrong-type', 'missing-field', 'non-finite', 'deep-json', 'bad-text', 'invalid-utf8', 'injection', 'traversal', 'unknown-enum', 'not-json', 'wrong-content-type'];

function multipart(parts: { name: string; value: string | Uint8Array; filename?: string }[], boundary: string, truncateAt?: number): Uint8Array {
	const enc = new TextEncoder();
	const chunks: number[] = [];
	for (const p of parts) {
		const disposition = `form-data; name="${p.name}"${p.filename !== undefined ? `; filename="${p.filename}"` : ''}`;
		chunks.push(...enc.encode(`--${boundary}\r\nContent-Disposition: ${disposition}\r\n${p.filename !== undefined ? 'Content-Type: application/octet-stream\r\n' : ''}\r\n`));
		chunks.push(...(typeof p.value === 'string' ? enc.encode(p.value) : p.value));
		chunks.push(...enc.encode('\r\n'));
	}
	chunks.push(...enc.encode(`--${boundary}--\r\n`));
	const all = new Uint8Array(chunks);
	return truncateAt === undefined ? all : all.slice(0, Math.max(1, Math.min(all.length - 8, truncateAt)));
}

/** A multipart body cut off before its end: a cut header, a cut value or a missing closing boundary. */
function truncatedMultipart(rnd: Rnd, fields: string[], boundary: string): Uint8Array {
	const parts = (fields.length ? fields.slice(0, 4) : ['file']).map((name) => ({ name, value: 'fuzz value' }));
	if (rnd() < 0.5) parts.push({ name: 'file', value: '%PDF-1.7\n' + 'x'.repeat(200), filename: 'cut.pdf' } as never);
	const full = multipart(parts, boundary);
	return full.slice(0, 1 + Math.floor(rnd() * (full.length - 12)));
}

/** The path with one param segment replaced by `value`. */
function withParam(t: Target, index: number, value: string): string {
	const routeSegs = t.routeId.split('/');
	const pathSegs = t.path.split('/');
	const paramName = t.params[index].name;
	const at = routeSegs.findIndex((s) => s.startsWith(`[${paramName}`) || s.startsWith(`[...${paramName}`));
	pathSegs[at] = value;
	return pathSegs.join('/');
}

const actionPath = (t: Target, path = t.path) => (t.action && t.action !== 'default' ? `${path}?/${t.action}` : path);

/**
 * `n` requests for one target. `schema` is the OpenAPI request body schema of an API write, if any.
 * `origin` goes into every write (SvelteKit's form check and the API's CSRF net need it).
 */
export function requestsFor(t: Target, n: number, rnd: Rnd, origin: string, schema: Schema | null): FuzzRequest[] {
	const out: FuzzRequest[] = [];
	const boundary = `----fuzz${Math.floor(rnd() * 1e9)}`;
	for (let i = 0; i < n; i++) {
		// A param segment of an id route: never 2xx (the matcher answers 404). Other params: no 5xx.
		if (t.params.length && rnd() < 0.2) {
			const p = Math.floor(rnd() * t.params.length);
			const path = withParam(t, p, pick(rnd, PATH_VALUES));
			const body = t.method === 'GET' || t.method === 'DELETE' ? undefined : t.kind === 'action' ? 'a=1' : '{}';
			const type = t.kind === 'action' ? 'application/x-www-form-urlencoded' : 'application/json';
			out.push({ cls: 'path-param', refused: t.params[p].idMatcher, method: t.method, path: t.kind === 'action' ? actionPath(t, path) : path, headers: body ? { 'content-type': type, origin } : { origin }, body });
			continue;
		}
		if (t.kind === 'page' || (t.kind === 'endpoint' && t.method === 'GET') || (t.kind === 'endpoint' && t.method === 'DELETE')) {
			// Reads (and DELETEs, which take no body): query strings. They may be answered 200, never 5xx.
			const params: string[] = [];
			const k = 1 + Math.floor(rnd() * 3);
			for (let j = 0; j < k; j++) params.push(`${pick(rnd, QUERY_KEYS)}=${pick(rnd, QUERY_VALUES)}`);
			if (t.method === 'DELETE') {
				out.push({ cls: 'query', refused: false, method: 'DELETE', path: `${t.path}?${params.join('&')}`, headers: { origin } });
			} else out.push({ cls: 'query', refused: false, method: 'GET', path: `${t.path}?${params.join('&')}`, headers: {} });
			continue;
		}
		if (t.kind === 'action') {
			const enhanced = rnd() < 0.5;
			const headers: Record<string, string> = { origin, ...(enhanced ? { accept: 'application/json', 'x-sveltekit-action': 'true' } : { accept: 'text/html' }) };
			const path = actionPath(t);
			const r = rnd();
			if (r < 0.3) {
				out.push({ cls: 'truncated-multipart', refused: true, method: 'POST', path, enhanced, headers: { ...headers, 'content-type': `multipart/form-data; boundary=${boundary}` }, body: truncatedMultipart(rnd, t.formFields, boundary) });
				continue;
			}
			const fields = t.formFields.length ? t.formFields : ['name', 'id', 'quantity'];
			const chosen = fields.filter(() => rnd() < 0.6);
			if (!chosen.length) chosen.push(pick(rnd, fields));
			const values = chosen.map((name) => ({ name, value: pick(rnd, FORM_GARBAGE) }));
			const nul = r < 0.5;
			if (nul) values[Math.floor(rnd() * values.length)].value = `fuzz\u0000${pick(rnd, ['', 'x', '\u0001'])}`;
			// Garbage in the fields (and a stray invalid percent-encoding now and then): only never a 5xx.
			const asMultipart = rnd() < 0.4;
			const body = asMultipart
				? multipart(values, boundary)
				: values.map((v) => `${encodeURIComponent(v.name)}=${encodeURIComponent(v.value)}`).join('&') + (!nul && rnd() < 0.2 ? `&${pick(rnd, chosen)}=%FF%FE%ED%A0%80` : '');
			out.push({
				cls: nul ? 'form-nul' : 'form-garbage',
				refused: nul,
				method: 'POST',
				path,
				enhanced,
				headers: { ...headers, 'content-type': asMultipart ? `multipart/form-data; boundary=${boundary}` : 'application/x-www-form-urlencoded' },
				body
			});
			continue;
		}
		// API writes (POST, PUT, PATCH).
		if (t.multipart) {
			const r = rnd();
			if (r < 0.4) {
				out.push({ cls: 'truncated-multipart', refused: true, method: t.method, path: t.path, headers: { origin, 'content-type': `multipart/form-data; boundary=${boundary}` }, body: truncatedMultipart(rnd, ['file'], boundary) });
			} else if (r < 0.7) {
				// A path-traversal or hostile file name on content that is no accepted file type (HTML, or empty).
				const filename = pick(rnd, [...TRAVERSALS, ...INJECTIONS.slice(0, 4), 'a\u0000b.pdf']);
				const content = pick(rnd, ['<html><script>alert(1)</script></html>', '', 'GIF89a', '\u0000\u0001\u0002']);
				out.push({ cls: 'traversal', refused: true, method: t.method, path: t.path, headers: { origin, 'content-type': `multipart/form-data; boundary=${boundary}` }, body: multipart([{ name: 'file', value: content, filename }], boundary) });
			} else {
				const cls = pick(rnd, ['not-json', 'wrong-type', 'bad-text']);
				out.push({ cls, refused: true, method: t.method, path: t.path, headers: { origin, 'content-type': 'application/json' }, body: JSON.stringify({ file: pick(rnd, TRAVERSALS) }) });
			}
			continue;
		}
		const cls = pick(rnd, JSON_CLASSES);
		if (cls === 'wrong-content-type') {
			const type = pick(rnd, ['text/plain', 'application/x-www-form-urlencoded', 'application/xml', '', 'application/x-json', 'multipart/form-data; boundary=x']);
			out.push({ cls, refused: true, method: t.method, path: t.path, headers: { origin, ...(type ? { 'content-type': type } : {}) }, body: '{"a":1}' });
			continue;
		}
		const body = jsonBody(cls, rnd, schema ?? {});
		out.push({ cls, refused: true, method: t.method, path: t.path, headers: { origin, 'content-type': 'application/json' }, body: body.bytes ?? body.text });
	}
	return out;
}
