import fs from 'node:fs';
import path from 'node:path';

export const ROUTES_DIR = path.resolve('src/routes');

/** Every route module (+page.server.ts, +layout.server.ts, +server.ts) below src/routes. */
export function routeModules(): { file: string; kind: 'page' | 'layout' | 'endpoint'; routeId: string }[] {
	const out: { file: string; kind: 'page' | 'layout' | 'endpoint'; routeId: string }[] = [];
	const walk = (dir: string) => {
		for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
			const p = path.join(dir, entry.name);
			if (entry.isDirectory()) walk(p);
			else if (/^\+(page|layout)\.server\.ts$|^\+server\.ts$/.test(entry.name)) {
				const routeId = '/' + path.relative(ROUTES_DIR, dir).split(path.sep).filter(Boolean).join('/');
				const kind = entry.name.startsWith('+server') ? 'endpoint' : entry.name.startsWith('+page') ? 'page' : 'layout';
				out.push({ file: p, kind, routeId: routeId === '/' ? '/' : routeId });
			}
		}
	};
	walk(ROUTES_DIR);
	return out.sort((a, b) => a.file.localeCompare(b.file));
}

/** HTTP methods a +server.ts exports. */
export function exportedMethods(file: string): string[] {
	const src = fs.readFileSync(file, 'utf8');
	const found = new Set<string>();
	for (const m of src.matchAll(/export\s+(?:const|async\s+function|function)\s+(GET|POST|PUT|PATCH|DELETE)\b/g)) found.add(m[1]);
	for (const m of src.matchAll(/export\s*\{([^}]*)\}/g))
		for (const name of m[1].split(',').map((s) => s.trim().split(/\s+as\s+/).pop()!))
			if (/^(GET|POST|PUT|PATCH|DELETE)$/.test(name)) found.add(name);
	return [...found].sort();
}

/** "/api/v1/parts/[id=int]/movements" → "/parts/{id}/movements" */
export function openApiPath(routeId: string): string {
	return routeId
		.replace(/^\/api\/v1/, '')
		.replace(/\[(?:\.\.\.)?([a-zA-Z0-9_]+)(?:=[a-zA-Z0-9_]+)?\]/g, '{$1}')
		.replace(/\/\([^)]*\)/g, '') || '/';
}
