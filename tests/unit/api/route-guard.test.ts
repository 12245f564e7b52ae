import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROUTES_DIR, exportedMethods, routeModules } from './route-files';

/**
 * Route modules that may run without requireRole, each with its reason. Everything else must call
 * requireRole(...) once per exported handler (load, each form action, each HTTP method).
 */
const PUBLIC_MODULES: Record<string, string> = {
	'+layout.server.ts': 'root layout: shapes the shell for whoever is signed in; each page guards itself',
	'signin/+page.server.ts': 'the sign-in form is public',
	'health/+server.ts': 'liveness probe, returns no data',
	'api/v1/openapi.json/+server.ts': 'the API description, no data'
};

function handlerCount(file: string, kind: string): number {
	const src = fs.readFileSync(file, 'utf8');
	if (kind === 'endpoint') return exportedMethods(file).length;
	let n = /export\s+const\s+load\b/.test(src) ? 1 : 0;
	const actions = /export\s+const\s+actions\s*=\s*\{([\s\S]*?)\n\}\s*satisfies/.exec(src);
	if (actions) n += [...actions[1].matchAll(/^\t(\w+)\s*:\s*async/gm)].length;
	return n;
}

describe('every route states the role it needs', () => {
	const modules = routeModules();
	it('finds the route modules', () => expect(modules.length).toBeGreaterThan(3));
	for (const m of modules) {
		const rel = path.relative(ROUTES_DIR, m.file).split(path.sep).join('/');
		it(`${rel} calls requireRole for each handler`, () => {
			if (PUBLIC_MODULES[rel]) return;
			const src = fs.readFileSync(m.file, 'utf8');
			const guards = [...src.matchAll(/requireRole\(/g)].length;
			expect(guards, `${rel}: ${handlerCount(m.file, m.kind)} handlers, ${guards} requireRole calls`).toBeGreaterThanOrEqual(
				handlerCount(m.file, m.kind)
			);
			expect(handlerCount(m.file, m.kind)).toBeGreaterThan(0);
		});
	}
});
