// The private services npm start and npm test run: administrators only through the socket, a
// private bucket. (Issue 13, item 8; SECURITY.md 12.3: anonymous S3 GET → 403.)
import { describe, expect, it } from 'vitest';
import mysql from 'mysql2/promise';
import { S3Client, PutObjectCommand, GetObjectCommand } from '@aws-sdk/client-s3';
import { testEnv } from '../../support/env';

const dbPort = () => Number(new URL(testEnv('DATABASE_URL')).port);

async function tcpLogin(user: string, password = ''): Promise<string> {
	try {
		const c = await mysql.createConnection({ host: '127.0.0.1', port: dbPort(), user, password, connectTimeout: 5000 });
		await c.end();
		return 'connected';
	} catch (err) {
		return (err as { code?: string }).code ?? String(err);
	}
}

describe('MariaDB of the local stack', () => {
	it('refuses root over TCP (empty password, or any password)', async () => {
		expect(await tcpLogin('root')).toMatch(/^ER_ACCESS_DENIED/);
		expect(await tcpLogin('root', 'root')).toMatch(/^ER_ACCESS_DENIED/);
	});

	it('has no anonymous account reachable over TCP', async () => {
		expect(await tcpLogin('')).toMatch(/^ER_ACCESS_DENIED/);
		expect(await tcpLogin('nobody')).toMatch(/^ER_ACCESS_DENIED/);
	});

	it('lets the app user in over TCP with its password, and only into its own database', async () => {
		const c = await mysql.createConnection(testEnv('DATABASE_URL'));
		try {
			const [[me]] = (await c.query('SELECT CURRENT_USER() AS u')) as unknown as [{ u: string }[]];
			expect(me.u).toBe('glasscrib@127.0.0.1');
			await expect(c.query('SELECT COUNT(*) FROM mysql.user')).rejects.toMatchObject({ code: 'ER_TABLEACCESS_DENIED_ERROR' });
		} finally {
			await c.end();
		}
	});
});

describe('the S3 fake', () => {
	const endpoint = () => testEnv('S3_ENDPOINT');
	const bucket = () => testEnv('S3_BUCKET');
	const s3 = () =>
		new S3Client({
			region: 'us-east-1',
			endpoint: endpoint(),
			forcePathStyle: true,
			credentials: { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' },
			requestChecksumCalculation: 'WHEN_REQUIRED',
			responseChecksumValidation: 'WHEN_REQUIRED'
		});

	it('refuses anonymous reads, listings and writes with 403, and serves signed requests', async () => {
		const Key = `anonymous-check/${Date.now()}.txt`;
		await s3().send(new PutObjectCommand({ Bucket: bucket(), Key, Body: 'private bytes' }));
		const signed = await s3().send(new GetObjectCommand({ Bucket: bucket(), Key }));
		expect(await signed.Body!.transformToString()).toBe('private bytes');

		const get = await fetch(`${endpoint()}/${bucket()}/${Key}`);
		expect(get.status).toBe(403);
		expect(await get.text()).toContain('<Code>AccessDenied</Code>');
		expect((await fetch(`${endpoint()}/${bucket()}/`)).status).toBe(403);
		expect((await fetch(`${endpoint()}/`)).status).toBe(403);
		const put = await fetch(`${endpoint()}/${bucket()}/anonymous-check/put.txt`, { method: 'PUT', body: 'x' });
		expect(put.status).toBe(403);
		// A wrong signature is refused by s3rver itself.
		const forged = await fetch(`${endpoint()}/${bucket()}/${Key}`, { headers: { authorization: 'AWS S3RVER:forged' } });
		expect(forged.status).toBe(403);
	});
});
