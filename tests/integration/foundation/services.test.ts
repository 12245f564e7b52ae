import { afterAll, describe, expect, it } from 'vitest';
import { count, inArray, sql } from 'drizzle-orm';
import nodemailer from 'nodemailer';
import { S3Client, CreateBucketCommand, PutObjectCommand, GetObjectCommand } from '@aws-sdk/client-s3';
import { testDb, testEnv } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { demoParts } from '../../../seed/demo-data';

const { db, pool } = testDb();
afterAll(() => pool.end());

describe('the throwaway stack that npm test starts', () => {
	it('has the migrations applied and the demo scenario seeded', async () => {
		// Every demo part is there (other test files add parts of their own to the shared database, so count the seed's).
		const skus = demoParts().map((p) => p.sku);
		expect(skus.length).toBeGreaterThanOrEqual(60);
		const [parts] = await db.select({ n: count() }).from(t.parts).where(inArray(t.parts.sku, skus));
		expect(parts.n).toBe(skus.length);
		const roles = await db.select({ role: t.users.role }).from(t.users);
		expect(new Set(roles.map((r) => r.role))).toEqual(new Set(['admin', 'stockroom', 'engineer', 'purchaser']));
		const [{ cs }] = (await db.execute(sql`select @@character_set_database as cs`))[0] as unknown as { cs: string }[];
		expect(cs).toBe('utf8mb4');
	});

	it('seeds a ledger whose sums equal the stock table, bucket by bucket', async () => {
		const [rows] = await db.execute(sql`
			select b.part_id, b.location_id, b.cond, b.ledger, coalesce(s.quantity, 0) as stock from (
				select part_id, location_id, cond, sum(q) as ledger from (
					select part_id, to_location_id as location_id, to_condition as cond, quantity as q from movements where to_location_id is not null
					union all
					select part_id, from_location_id, from_condition, -quantity from movements where from_location_id is not null
				) m group by part_id, location_id, cond
			) b left join stock s on s.part_id = b.part_id and s.location_id = b.location_id and s.\`condition\` = b.cond`);
		const list = rows as unknown as { ledger: string; stock: number }[];
		expect(list.length).toBeGreaterThan(20);
		for (const r of list) expect(Number(r.ledger)).toBe(Number(r.stock));
	});

	it('captures mail sent over SMTP in the outbox table', async () => {
		const subject = `Outbox check ${Date.now()}`;
		const transport = nodemailer.createTransport({ url: testEnv('SMTP_URL'), secure: false, ignoreTLS: true });
		await transport.sendMail({ from: 'glasscrib@tarnwell.example', to: 'someone@tarnwell.example', subject, text: 'hello bench' });
		let found: (typeof t.outboxMessages.$inferSelect)[] = [];
		for (let i = 0; i < 50 && !found.length; i++) {
			found = await db.select().from(t.outboxMessages).where(sql`${t.outboxMessages.subject} = ${subject}`);
			if (!found.length) await new Promise((r) => setTimeout(r, 100));
		}
		expect(found).toHaveLength(1);
		expect(found[0].toAddresses).toBe('someone@tarnwell.example');
		expect(found[0].textBody?.trim()).toBe('hello bench');
	});

	it('stores and returns bytes through the S3 fake', async () => {
		const s3 = new S3Client({
			region: 'us-east-1',
			endpoint: testEnv('S3_ENDPOINT'),
			forcePathStyle: true,
			credentials: { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' },
			requestChecksumCalculation: 'WHEN_REQUIRED',
			responseChecksumValidation: 'WHEN_REQUIRED'
		});
		const Bucket = 'foundation-check';
		await s3.send(new CreateBucketCommand({ Bucket })).catch(() => undefined);
		const body = Buffer.from('glasscrib ' + 'x'.repeat(1000));
		await s3.send(new PutObjectCommand({ Bucket, Key: 'a/b.txt', Body: body }));
		const got = await s3.send(new GetObjectCommand({ Bucket, Key: 'a/b.txt' }));
		expect(Buffer.from(await got.Body!.transformToByteArray()).equals(body)).toBe(true);
	});

	it('serves /health and the security headers from the built app', async () => {
		const res = await fetch(new URL('/health', testEnv('APP_URL')));
		expect(res.status).toBe(200);
		const health = await res.json();
		expect(health.ok).toBe(true);
		expect(health.transactionRetries).toBeTypeOf('number');
		expect(res.headers.get('x-frame-options')).toBe('DENY');
		expect(res.headers.get('x-content-type-options')).toBe('nosniff');
		expect(res.headers.get('referrer-policy')).toBe('same-origin');
		expect(res.headers.get('cache-control')).toBe('no-store');
		const page = await fetch(new URL('/signin', testEnv('APP_URL')));
		expect(page.headers.get('content-security-policy')).toContain("frame-ancestors 'none'");
	});

	it('sends the security headers on pages, API answers and not-found answers of a signed-in user (SECURITY.md 14.4)', async () => {
		const app = testEnv('APP_URL');
		const signin = await fetch(new URL('/api/v1/session', app), {
			method: 'POST',
			headers: { 'content-type': 'application/json', origin: app },
			body: JSON.stringify({ email: 'engineer@tarnwell.example', password: process.env.DEMO_PASSWORD || 'tarnwell-bench-2026' })
		});
		const cookie = signin.headers.getSetCookie()[0].split(';')[0];
		const get = (p: string) => fetch(new URL(p, app), { headers: { cookie }, redirect: 'manual' });
		const answers = { page: await get('/parts'), api: await get('/api/v1/parts?pageSize=1'), missingPage: await get('/no-such-page'), missingApi: await get('/api/v1/parts/99999999') };
		expect([answers.page.status, answers.api.status, answers.missingPage.status, answers.missingApi.status]).toEqual([200, 200, 404, 404]);
		for (const [what, res] of Object.entries(answers)) {
			const h = (k: string) => res.headers.get(k);
			expect({ what, frame: h('x-frame-options'), sniff: h('x-content-type-options'), ref: h('referrer-policy'), cache: h('cache-control') }).toEqual({
				what,
				frame: 'DENY',
				sniff: 'nosniff',
				ref: 'same-origin',
				cache: 'no-store'
			});
			expect(h('permissions-policy')).toContain('camera=()');
			expect(h('strict-transport-security')).toMatch(/^max-age=31536000/);
			if (what.endsWith('Api') || what === 'api') {
				expect(h('content-type')).toBe('application/json; charset=utf-8');
				expect(h('content-disposition')).toBe('attachment; filename="api.json"');
			} else {
				const csp = h('content-security-policy') ?? '';
				for (const d of ["default-src 'self'", "object-src 'none'", "base-uri 'self'", "form-action 'self'", "frame-ancestors 'none'"]) expect(csp).toContain(d);
				expect(csp).toMatch(/script-src 'self' 'nonce-[^']+'/);
			}
		}
		// The 404 page names the path and shows no stack or version.
		const body = await answers.missingPage.text();
		expect(body).toContain('/no-such-page');
		expect(body).not.toMatch(/at .*\.js:\d+|node_modules|SvelteKit v?\d/);
	});

	it('redirects anonymous page requests to sign-in and answers the API with 401 JSON', async () => {
		const res = await fetch(new URL('/', testEnv('APP_URL')), { redirect: 'manual' });
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe('/signin?redirectTo=%2F');
		const api = await fetch(new URL('/api/v1/anything', testEnv('APP_URL')));
		expect(api.status).toBe(401);
		expect(await api.json()).toEqual({ error: { code: 'unauthenticated', message: 'Sign in first.' } });
	});
});
