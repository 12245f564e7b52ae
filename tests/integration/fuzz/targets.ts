/**
 * What the fuzz suite sends requests to: every entry of the route table (accounts/route-access.ts,
 * which the role matrix keeps equal to the route tree), each page load and endpoint method, and each
 * form action. New routes are covered as soon as they are in the table. The request body schemas of
 * the API come from the OpenAPI document the app serves, so a generator knows field names, types,
 * enums and required fields without a list kept here.
 */
import fs from 'node:fs';
import path from 'node:path';
import { ROUTE_ACCESS, type Access, type Method } from '../accounts/route-access';
import { ROUTES_DIR, openApiPath } from '../../unit/api/route-files';

export interface Target {
	routeId: string;
	/** 'endpoint' (+server.ts), 'page' (a page load, GET) or 'action' (a form action, POST). */
	kind: 'endpoint' | 'page' | 'action';
	method: Method;
	/** The action's name ('default' for the unnamed one). */
	action?: string;
	/** A sample path with its params filled (the table's `url`, ids of records that do not exist). */
	path: string;
	access: Access;
	/** The params of the route and whether each has the `id` matcher. */
	params: { name: string; idMatcher: boolean }[];
	/** Reads a multipart body (file uploads). */
	multipart: boolean;
	/** Signs the caller out: sent without the fuzzer's session. */
	endsSession: boolean;
	/** Form field names found in the page's markup (actions only). */
	formFields: string[];
	/** The OpenAPI path (API routes), e.g. "/parts/{id}". */
	openApiPath: string | null;
}

function moduleSource(routeId: string, file: string): string {
	const p = path.join(ROUTES_DIR, routeId, file);
	return fs.existsSync(p) ? fs.readFileSync(p, 'utf8') : '';
}

/** `name="…"` attributes in a page and the components it imports from $lib/components (one level). */
function formFieldsOf(routeId: string): string[] {
	const names = new Set<string>();
	const page = moduleSource(routeId, '+page.svelte');
	const sources = [page];
	for (const m of page.matchAll(/from\s+'\$lib\/components\/([\w/-]+\.svelte)'/g)) {
		const p = path.resolve('src/lib/components', m[1]);
		if (fs.existsSync(p)) sources.push(fs.readFileSync(p, 'utf8'));
	}
	for (const src of sources) for (const m of src.matchAll(/\bname="([A-Za-z_][\w.-]*)"/g)) names.add(m[1]);
	return [...names].sort();
}

/** Every target of the route table, in a stable order. */
export function fuzzTargets(): Target[] {
	const out: Target[] = [];
	for (const [routeId, entry] of Object.entries(ROUTE_ACCESS).sort(([a], [b]) => a.localeCompare(b))) {
		const params = [...routeId.matchAll(/\[(?:\.\.\.)?(\w+)(?:=(\w+))?\]/g)].map((m) => ({ name: m[1], idMatcher: m[2] === 'id' }));
		const samplePath = entry.url ?? routeId;
		const isApi = routeId.startsWith('/api/');
		const src = isApi ? moduleSource(routeId, '+server.ts') : moduleSource(routeId, '+page.server.ts');
		const multipart = /readMultipartStream|readCsvUpload/.test(src);
		const base = { routeId, path: samplePath, params, multipart, endsSession: entry.endsSession === true, openApiPath: isApi ? openApiPath(routeId) : null };
		for (const method of ['GET', 'POST', 'PUT', 'PATCH', 'DELETE'] as const) {
			const access = entry[method];
			if (!access) continue;
			out.push({ ...base, kind: isApi ? 'endpoint' : 'page', method, access, formFields: [] });
		}
		const fields = entry.actions ? formFieldsOf(routeId) : [];
		for (const [action, access] of Object.entries(entry.actions ?? {})) {
			out.push({ ...base, kind: 'action', method: 'POST', action, access, formFields: fields });
		}
	}
	return out;
}
