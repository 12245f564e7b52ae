/**
 * Image bombs and big photos: a photo's pixel count is read from its header and refused past the cap
 * before anything is decoded; an allowed photo is thumbnailed in a worker thread, so the catalogue
 * keeps answering meanwhile. The figures are printed (timing targets belong in benchmarks, not here).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { count, eq } from 'drizzle-orm';
import { testDb, testEnv } from '../../support/env';
import { greyPng } from '../../support/png';
import * as t from '../../../src/lib/server/db/schema';
import { cookieFor } from '../accounts/helpers';

const { db, pool } = testDb();
const APP = () => testEnv('APP_URL');
let stockroom = '';
let partId = 0;
const made: number[] = [];

beforeAll(async () => {
	stockroom = await cookieFor('stockroom@tarnwell.example');
	const [p] = await db.select({ id: t.parts.id }).from(t.parts).orderBy(t.parts.id).limit(1);
	partId = p.id;
});
afterAll(async () => {
	for (const id of made) await fetch(`${APP()}/api/v1/datasheets/${id}`, { method: 'DELETE', headers: { cookie: stockroom, origin: APP() } });
	await pool.end();
});

function post(bytes: Uint8Array, filename: string) {
	const body = new FormData();
	body.append('file', new Blob([bytes as Uint8Array<ArrayBuffer>]), filename);
	return fetch(`${APP()}/api/v1/parts/${partId}/datasheets`, { method: 'POST', body, headers: { cookie: stockroom, origin: APP() } });
}

const sheetsOfPart = async () => (await db.select({ n: count() }).from(t.datasheets).where(eq(t.datasheets.partId, partId)))[0].n;

describe('photos: pixel cap and thumbnails off the request thread', () => {
	it('refuses a 20000 × 20000 PNG bomb (about 430 KB) from its header with 413, and stores nothing', async () => {
		const bomb = await greyPng(20000, 20000);
		const before = await sheetsOfPart();
		const started = performance.now();
		const res = await post(bomb, 'bomb.png');
		const ms = performance.now() - started;
		expect(res.status).toBe(413);
		const { error } = await res.json();
		expect(error.code).toBe('image-too-large');
		expect(error.message).toMatch(/20000 × 20000 pixels \(400 megapixels\); photos may have at most 30 megapixels/);
		expect(await sheetsOfPart()).toBe(before);
		console.log(`[figures] ${(bomb.byteLength / 1024).toFixed(0)} KB bomb refused in ${ms.toFixed(0)} ms`);
	});

	it('keeps answering catalogue requests while a big but allowed photo is thumbnailed', async () => {
		// 5400 × 5400 = 29.2 MP, just under the cap: seconds of decoding for jimp.
		const photo = await greyPng(5400, 5400);
		const started = performance.now();
		let finished = false;
		const upload = post(photo, 'big bench photo.png').then(async (res) => {
			finished = true;
			return { res, ms: performance.now() - started };
		});
		// One catalogue request after the other until the upload is done.
		const latencies: number[] = [];
		while (!finished) {
			const t0 = performance.now();
			const res = await fetch(`${APP()}/api/v1/parts?pageSize=20`, { headers: { cookie: stockroom } });
			expect(res.status).toBe(200);
			await res.json();
			if (!finished) latencies.push(performance.now() - t0);
		}
		const { res, ms } = await upload;
		expect(res.status).toBe(201);
		const sheet = await res.json();
		made.push(sheet.id);
		expect(sheet.thumbnail).toEqual({ width: 320, height: 320 });
		// The catalogue answered, again and again, before the upload finished: no request waited for the
		// decoding (on the request thread, the first one would have waited for nearly the whole upload).
		expect(latencies.length).toBeGreaterThanOrEqual(5);
		expect(Math.max(...latencies)).toBeLessThan(ms / 2);
		const sorted = [...latencies].sort((a, b) => a - b);
		console.log(
			`[figures] 29.2 MP photo uploaded and thumbnailed in ${ms.toFixed(0)} ms; ${latencies.length} catalogue requests answered meanwhile, ` +
				`median ${sorted[Math.floor(sorted.length / 2)].toFixed(0)} ms, worst ${sorted[sorted.length - 1].toFixed(0)} ms`
		);
	});
});
