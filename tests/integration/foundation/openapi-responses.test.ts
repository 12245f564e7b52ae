/**
 * Real answers of the built app against the OpenAPI document it serves: each call below is made as a
 * demo user and its JSON body validated (ajv, JSON Schema 2020-12, the dialect of OpenAPI 3.1) against
 * the schema the document gives for that path, method and status. The document is made from the zod
 * schemas (src/lib/server/api/openapi), so this keeps the answers' documented shapes honest.
 * What it creates (one part, its stock and a reservation) is archived or released at the end.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { eq } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { api, cookieFor, signInApi } from '../accounts/helpers';

type Doc = { paths: Record<string, Record<string, { responses: Record<string, { content?: Record<string, { schema: object }> }> }>>; components: { schemas: Record<string, object> } };

const { db, pool } = testDb();
const tag = `OA${Date.now().toString(36).toUpperCase()}`;
let doc: Doc;
let ajv: Ajv2020;
const cookies: Record<string, string> = {};
let partId = 0;

/** The documented schema of an answer (the path as the document writes it, e.g. "/parts/{id}"). */
function documented(method: string, template: string, status: number) {
	const op = doc.paths[template]?.[method.toLowerCase()];
	expect(op, `${method} ${template} is documented`).toBeDefined();
	const schema = op.responses[String(status)]?.content?.['application/json']?.schema;
	expect(schema, `${method} ${template} documents a JSON ${status}`).toBeDefined();
	return schema!;
}

/** Validates a body against a schema; the ajv errors, or null. */
function problems(schema: object, body: unknown) {
	const validate = ajv.compile({ ...schema, components: doc.components });
	return validate(body) ? null : validate.errors;
}

/** Calls the API, expects `status`, and checks the body against the document. */
async function call(who: string, method: string, path: string, template: string, status: number, body?: unknown) {
	const res = await api(method, path, { cookie: cookies[who] }, body);
	const text = await res.text();
	expect(res.status, `${method} ${path}: ${text.slice(0, 300)}`).toBe(status);
	const json = JSON.parse(text);
	expect(problems(documented(method, template, status), json), `${method} ${path}`).toBeNull();
	return json;
}

beforeAll(async () => {
	doc = await (await api('GET', '/api/v1/openapi.json')).json();
	ajv = new Ajv2020({ strict: false, allErrors: true });
	ajv.addFormat('date-time', /^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d+)?(Z|[+-]\d\d:\d\d)$/);
	for (const who of ['stockroom', 'engineer', 'purchaser']) cookies[who] = await cookieFor(`${who}@tarnwell.example`);
});

afterAll(async () => {
	if (partId) {
		await db.update(t.reservations).set({ status: 'released' }).where(eq(t.reservations.partId, partId));
		await db.update(t.parts).set({ archivedAt: new Date() }).where(eq(t.parts.id, partId));
	}
	await pool.end();
});

describe('answers match the OpenAPI document', () => {
	it('the check itself refuses a body of the wrong shape', async () => {
		const schema = documented('GET', '/parts/{id}', 200);
		expect(problems(schema, { id: 'one', sku: 1 })).not.toBeNull();
		expect(problems(documented('GET', '/me', 200), { user: { id: 1, email: 'a@b', name: 'A', role: 'pilot' }, authVia: 'session' })).not.toBeNull();
	});

	it('session and the signed-in user', async () => {
		const { res } = await signInApi('engineer@tarnwell.example');
		expect(problems(documented('POST', '/session', 200), await res.json())).toBeNull();
		await call('engineer', 'GET', '/api/v1/me', '/me', 200);
		await call('engineer', 'GET', '/api/v1/tokens', '/tokens', 200);
	});

	it('catalogue reads', async () => {
		const page = await call('engineer', 'GET', '/api/v1/parts?pageSize=20', '/parts', 200);
		expect(page.items.length).toBeGreaterThan(0);
		const id = page.items[0].id;
		await call('engineer', 'GET', `/api/v1/parts/${id}`, '/parts/{id}', 200);
		await call('engineer', 'GET', `/api/v1/parts/${id}/movements`, '/parts/{id}/movements', 200);
		await call('engineer', 'GET', '/api/v1/locations', '/locations', 200);
		await call('engineer', 'GET', '/api/v1/reservations', '/reservations', 200);
	});

	it('catalogue and stock writes', async () => {
		const part = await call('stockroom', 'POST', '/api/v1/parts', '/parts', 201, {
			sku: `${tag}-1`,
			name: `OpenAPI check ${tag}`,
			kind: 'plano-convex',
			diameterMm: 25.4,
			surfaces: [{ radiusMm: 51.7, thicknessMm: 4, material: '517642' }, { radiusMm: null }],
			unitPrice: 12.5,
			currency: 'EUR'
		});
		partId = part.id;
		const locations = await (await api('GET', '/api/v1/locations', { cookie: cookies.stockroom })).json();
		const locationId = locations.items[0].id;
		await call('stockroom', 'POST', '/api/v1/stock/receive', '/stock/receive', 201, { partId, quantity: 3, locationId });
		await call('stockroom', 'PATCH', `/api/v1/parts/${partId}`, '/parts/{id}', 200, { notes: 'checked against the document' });
		const until = new Date(Date.now() + 86_400_000).toISOString();
		await call('engineer', 'POST', '/api/v1/reservations', '/reservations', 201, { partId, quantity: 1, until });
		await call('engineer', 'POST', '/api/v1/stock/issue', '/stock/issue', 201, { partId, quantity: 1, locationId });
		await call('stockroom', 'POST', '/api/v1/stock/move', '/stock/move', 201, { partId, quantity: 1, fromLocationId: locationId, toLocationId: locations.items[1].id });
		const ledger = await call('engineer', 'GET', `/api/v1/parts/${partId}/movements`, '/parts/{id}/movements', 200);
		expect(ledger.items.map((m: { kind: string }) => m.kind)).toEqual(['move', 'issue', 'receive']);
		await call('engineer', 'GET', `/api/v1/locations/${locationId}`, '/locations/{id}', 200);
		const mine = await call('engineer', 'GET', `/api/v1/reservations?partId=${partId}`, '/reservations', 200);
		expect(mine.items).toHaveLength(1);
		const gone = await call('stockroom', 'DELETE', `/api/v1/parts/${partId}`, '/parts/{id}', 200);
		expect(gone.outcome).toBe('archived');
	});

	it('errors have the Error shape', async () => {
		await call('engineer', 'GET', '/api/v1/parts/99999999', '/parts/{id}', 404);
		await call('stockroom', 'POST', '/api/v1/parts', '/parts', 400, {});
		await call('engineer', 'POST', '/api/v1/stock/receive', '/stock/receive', 403, { partId: 1, quantity: 1, locationId: 1 });
	});

	it('build from stock', async () => {
		const answer = await call('engineer', 'POST', '/api/v1/solve', '/solve', 200, { trackMm: 300, magnification: -0.5, objectNA: 0.03, objectHeightMm: 2, limit: 3 });
		expect(answer.solutions.length).toBeGreaterThan(0);
	});

	it('purchasing reads', async () => {
		await call('purchaser', 'GET', '/api/v1/reorder', '/reorder', 200);
		const requests = await call('purchaser', 'GET', '/api/v1/purchase-requests', '/purchase-requests', 200);
		if (requests.items.length) await call('purchaser', 'GET', `/api/v1/purchase-requests/${requests.items[0].id}`, '/purchase-requests/{id}', 200);
		await call('stockroom', 'GET', '/api/v1/imports', '/imports', 200);
	});
});
