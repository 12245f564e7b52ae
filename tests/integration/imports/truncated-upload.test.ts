/**
 * An upload cut off inside its file part: the CSV import and a datasheet upload answer 400, and the
 * app lives on (busboy's "Unexpected end of form" on the file stream used to be an unhandled error
 * that ended the process; the fuzz suite found it).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { like } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { APP, api, cookieFor, url } from '../accounts/helpers';

const { db, pool } = testDb();
const tag = `TU${Date.now().toString(36).toUpperCase()}`;
let stockroom = '';
let partId = 0;

beforeAll(async () => {
	stockroom = await cookieFor('stockroom@tarnwell.example');
	const res = await api('POST', '/api/v1/parts', { cookie: stockroom }, { sku: `${tag}-1`, name: 'Truncated upload test', kind: 'other', diameterMm: 25, eflMm: 100 });
	partId = (await res.json()).id;
});
afterAll(async () => {
	await db.update(t.parts).set({ archivedAt: new Date() }).where(like(t.parts.sku, `${tag}%`));
	await pool.end();
});

/** A multipart body whose file part stops in the middle (no closing boundary). */
function cutInFile(content: string) {
	return `--CUT\r\nContent-Disposition: form-data; name="file"; filename="x.csv"\r\nContent-Type: text/csv\r\n\r\n${content}`;
}

describe('uploads cut off inside the file', () => {
	it.each([
		['the CSV import API', () => '/api/v1/imports', 'sku,name\nA-1,One\nA-2,Tw'],
		['a datasheet upload', () => `/api/v1/parts/${partId}/datasheets`, '%PDF-1.7\n' + 'x'.repeat(5000)]
	])('%s answers 400 and the app keeps serving', async (_, path, content) => {
		const res = await fetch(url(path()), {
			method: 'POST',
			headers: { cookie: stockroom, origin: APP(), 'content-type': 'multipart/form-data; boundary=CUT' },
			body: cutInFile(content)
		});
		expect(res.status).toBe(400);
		expect((await res.json()).error.code).toBe('invalid-multipart');
		expect((await fetch(url('/health'))).status).toBe(200);
	});

	it('the import wizard form answers 400 and the app keeps serving', async () => {
		const res = await fetch(url('/imports/new'), {
			method: 'POST',
			headers: { cookie: stockroom, origin: APP(), 'content-type': 'multipart/form-data; boundary=CUT', accept: 'application/json', 'x-sveltekit-action': 'true' },
			body: cutInFile('sku,name\nA-1,One\nA-2,Tw')
		});
		const body = await res.json();
		expect(body.status ?? res.status).toBe(400);
		expect((await fetch(url('/health'))).status).toBe(200);
	});
});
