import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { count, eq } from 'drizzle-orm';
import { Jimp, JimpMime } from 'jimp';
import { testDb, testEnv } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { cookieFor } from '../accounts/helpers';
import { createObjectStore, objectStoreFromEnv, StorageUnavailable } from '../../../src/lib/server/files/s3';
import { uploadDatasheet } from '../../../src/lib/server/files/datasheets';

const { db, pool } = testDb();
const store = objectStoreFromEnv(process.env);
const APP = () => testEnv('APP_URL');
const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');
let stockroom = '';
let engineer = '';
let partId = 0;
let partSku = '';
const made: number[] = [];

beforeAll(async () => {
	stockroom = await cookieFor('stockroom@tarnwell.example');
	engineer = await cookieFor('engineer@tarnwell.example');
	const [p] = await db.select({ id: t.parts.id, sku: t.parts.sku }).from(t.parts).orderBy(t.parts.id).limit(1);
	partId = p.id;
	partSku = p.sku;
});
afterAll(async () => {
	for (const id of made) await fetch(`${APP()}/api/v1/datasheets/${id}`, { method: 'DELETE', headers: { cookie: stockroom, origin: APP() } });
	await pool.end();
});

/** A PDF-looking file of `size` bytes (random body after the signature). */
function pdf(size: number) {
	const b = new Uint8Array(size);
	for (let i = 0; i < size; i++) b[i] = (i * 2654435761) >>> 24;
	b.set(new TextEncoder().encode('%PDF-1.7\n'));
	return b;
}

async function post(bytes: Uint8Array, filename: string, cookie = stockroom) {
	const body = new FormData();
	body.append('file', new Blob([bytes as Uint8Array<ArrayBuffer>]), filename);
	return fetch(`${APP()}/api/v1/parts/${partId}/datasheets`, { method: 'POST', body, headers: { cookie, origin: APP() } });
}

describe('datasheets through the app and s3rver', () => {
	it('uploads a PDF and downloads it byte-identical (sha256), as an attachment with safe headers', async () => {
		const bytes = pdf(3 * 1024 * 1024 + 17);
		const res = await post(bytes, '../../secret/Datasheet ø.pdf');
		expect(res.status).toBe(201);
		const sheet = await res.json();
		made.push(sheet.id);
		expect(sheet).toMatchObject({ partId, filename: 'Datasheet ø.pdf', contentType: 'application/pdf', kind: 'document', sizeBytes: bytes.length, sha256: sha(bytes), thumbnailUrl: null });
		const [row] = await db.select().from(t.datasheets).where(eq(t.datasheets.id, sheet.id));
		expect(row.s3Key).toMatch(/^datasheets\/[0-9a-f-]{36}$/);

		// Any signed-in role may download.
		const dl = await fetch(`${APP()}${sheet.downloadUrl}`, { headers: { cookie: engineer } });
		expect(dl.status).toBe(200);
		const back = new Uint8Array(await dl.arrayBuffer());
		expect(sha(back)).toBe(sha(bytes));
		expect(dl.headers.get('content-type')).toBe('application/pdf');
		expect(dl.headers.get('content-disposition')).toMatch(new RegExp(`^attachment; filename="${partSku.replace(/[^A-Za-z0-9._-]/g, '_')}-${sheet.id}\\.pdf"; filename\\*=UTF-8''Datasheet%20%C3%B8\\.pdf$`));
		expect(dl.headers.get('x-content-type-options')).toBe('nosniff');
		expect(dl.headers.get('content-security-policy')).toBe("default-src 'none'; sandbox");

		// Viewed inline in the browser's own viewer (issue 16): the same bytes and the same sandbox CSP.
		const view = await fetch(`${APP()}${sheet.downloadUrl}?view=inline`, { headers: { cookie: engineer } });
		expect(view.status).toBe(200);
		expect(view.headers.get('content-disposition')).toMatch(/^inline; filename=/);
		expect(view.headers.get('content-security-policy')).toBe("default-src 'none'; sandbox");
		expect(view.headers.get('x-content-type-options')).toBe('nosniff');
		expect(sha(new Uint8Array(await view.arrayBuffer()))).toBe(sha(bytes));
		expect((await fetch(`${APP()}${sheet.downloadUrl}?view=page`, { headers: { cookie: engineer } })).status).toBe(400);

		// The original file name is kept as object metadata.
		const obj = await store.get(row.s3Key);
		expect(obj.metadata['original-filename']).toBe('Datasheet ø.pdf');
		obj.body.destroy();
	});

	it('refuses downloads without a session', async () => {
		const [row] = await db.select().from(t.datasheets).where(eq(t.datasheets.partId, partId)).limit(1);
		const res = await fetch(`${APP()}/api/v1/datasheets/${row.id}`);
		expect(res.status).toBe(401);
	});

	it('refuses HTML named .pdf and SVG by their bytes, and engineers may not upload', async () => {
		const html = await post(new TextEncoder().encode('<!doctype html><script>alert(1)</script>'), 'datasheet.pdf');
		expect(html.status).toBe(400);
		expect((await html.json()).error.message).toMatch(/HTML page.*PDF, PNG or JPEG/);
		const svg = await post(new TextEncoder().encode('<svg xmlns="http://www.w3.org/2000/svg"/>'), 'photo.png');
		expect(svg.status).toBe(400);
		const eng = await post(pdf(100), 'x.pdf', engineer);
		expect(eng.status).toBe(403);
	});

	it('refuses a PDF over 25 MB with 413 and a clear message', async () => {
		const res = await post(pdf(25 * 1024 * 1024 + 1), 'huge.pdf');
		expect(res.status).toBe(413);
		expect((await res.json()).error.message).toMatch(/at most 25 MB/);
	});

	it('makes a thumbnail of a photo that fits 320 px', async () => {
		const img = new Jimp({ width: 1600, height: 900, color: 0x2a6f7fff });
		const jpeg = new Uint8Array(await img.getBuffer(JimpMime.jpeg));
		const res = await post(jpeg, 'bench photo.jpg');
		expect(res.status).toBe(201);
		const sheet = await res.json();
		made.push(sheet.id);
		expect(sheet.thumbnail).toEqual({ width: 320, height: 180 });
		const th = await fetch(`${APP()}${sheet.thumbnailUrl}`, { headers: { cookie: engineer } });
		expect(th.headers.get('content-type')).toBe('image/png');
		const decoded = await Jimp.read(Buffer.from(await th.arrayBuffer()));
		expect([decoded.width, decoded.height]).toEqual([320, 180]);
	});

	it('deletes the row and the object together', async () => {
		const res = await post(pdf(1000), 'to-delete.pdf');
		const sheet = await res.json();
		const [row] = await db.select().from(t.datasheets).where(eq(t.datasheets.id, sheet.id));
		const del = await fetch(`${APP()}/api/v1/datasheets/${sheet.id}`, { method: 'DELETE', headers: { cookie: stockroom, origin: APP() } });
		expect(del.status).toBe(204);
		expect(await db.select().from(t.datasheets).where(eq(t.datasheets.id, sheet.id))).toEqual([]);
		await expect(store.get(row.s3Key)).rejects.toMatchObject({ status: 404 });
	});

	it('answers 503 and leaves no row when S3 is down', async () => {
		const down = createObjectStore({ endpoint: 'http://127.0.0.1:9', bucket: 'glasscrib', region: 'us-east-1', accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' });
		const [{ id: actorId }] = await db.select({ id: t.users.id }).from(t.users).where(eq(t.users.role, 'stockroom')).limit(1);
		const before = (await db.select({ n: count() }).from(t.datasheets))[0].n;
		const err = await uploadDatasheet(db, down, { partId, filename: 'x.pdf', file: pdf(500), actorId }).catch((e) => e);
		expect(err).toBeInstanceOf(StorageUnavailable);
		expect(err.status).toBe(503);
		expect(err.message).toMatch(/file store is not reachable.*nothing was saved/);
		expect((await db.select({ n: count() }).from(t.datasheets))[0].n).toBe(before);
	});

	it('matches dropped file names to SKUs for bulk attach', async () => {
		const res = await fetch(`${APP()}/api/v1/datasheets/match`, {
			method: 'POST',
			headers: { cookie: stockroom, origin: APP(), 'content-type': 'application/json' },
			body: JSON.stringify({ filenames: [`${partSku}.pdf`, `${partSku.toLowerCase()}_photo.jpg`, 'mystery.pdf'] })
		});
		const { matches } = await res.json();
		expect(matches.map((m: { part: { id: number } | null }) => m.part?.id ?? null)).toEqual([partId, partId, null]);
	});
});
