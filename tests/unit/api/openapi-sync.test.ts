import { describe, expect, it } from 'vitest';
import { openApiDocument } from '$lib/server/api/openapi';
import { exportedMethods, openApiPath, routeModules } from './route-files';

describe('OpenAPI document', () => {
	const doc = openApiDocument();
	const endpoints = routeModules()
		.filter((m) => m.kind === 'endpoint' && m.routeId.startsWith('/api/v1'))
		.flatMap((m) => exportedMethods(m.file).map((method) => `${method} ${openApiPath(m.routeId)}`));

	it('is OpenAPI 3.1 with the error schema', () => {
		expect(doc.openapi).toBe('3.1.0');
		expect(doc.components.schemas.Error).toBeDefined();
	});

	it('lists every endpoint under src/routes/api/v1, and nothing else', () => {
		const documented = Object.entries(doc.paths).flatMap(([p, ops]) => Object.keys(ops).map((m) => `${m.toUpperCase()} ${p}`));
		expect(endpoints.length).toBeGreaterThan(0);
		expect([...documented].sort()).toEqual([...endpoints].sort());
	});
});
