/**
 * A file store or mail server that accepts connections and never answers must not hold a request:
 * S3 calls give StorageUnavailable (503) and mail deliveries an error within about 10 s (the limits
 * are S3_TIMEOUTS and MAIL_TIMEOUTS; before them, an upload hung for over 100 s).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import net from 'node:net';
import { count, eq } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import { createObjectStore, S3_TIMEOUTS, StorageUnavailable } from '../../../src/lib/server/files/s3';
import { uploadDatasheet } from '../../../src/lib/server/files/datasheets';
import { createMailer, MAIL_TIMEOUTS } from '../../../src/lib/server/mail';

const { db, pool } = testDb();
const sockets = new Set<net.Socket>();
/** Accepts every connection and never says a word. */
const silent = net.createServer((s) => {
	sockets.add(s);
	s.on('error', () => undefined);
	s.on('data', () => undefined);
});
/** Greets like an SMTP server, then goes silent after the client's first command. */
const greetsThenHangs = net.createServer((s) => {
	sockets.add(s);
	s.on('error', () => undefined);
	s.write('220 hung.example ESMTP\r\n');
	s.on('data', () => undefined);
});
const listen = (server: net.Server) =>
	new Promise<number>((resolve) => server.listen(0, '127.0.0.1', () => resolve((server.address() as net.AddressInfo).port)));
let silentPort = 0;
let greetPort = 0;

beforeAll(async () => {
	silentPort = await listen(silent);
	greetPort = await listen(greetsThenHangs);
});
afterAll(async () => {
	for (const s of sockets) s.destroy();
	silent.close();
	greetsThenHangs.close();
	await pool.end();
});

function pdf(size: number) {
	const b = new Uint8Array(size);
	b.set(new TextEncoder().encode('%PDF-1.7\n'));
	return b;
}

describe('hung services', () => {
	it('answers an upload with 503 within about 10 s when S3 accepts and never answers, and writes no row', async () => {
		const hung = createObjectStore({ endpoint: `http://127.0.0.1:${silentPort}`, bucket: 'glasscrib', region: 'us-east-1', accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' });
		const [part] = await db.select({ id: t.parts.id }).from(t.parts).orderBy(t.parts.id).limit(1);
		const [{ id: actorId }] = await db.select({ id: t.users.id }).from(t.users).where(eq(t.users.role, 'stockroom')).limit(1);
		const before = (await db.select({ n: count() }).from(t.datasheets))[0].n;
		const started = performance.now();
		const err = await uploadDatasheet(db, hung, { partId: part.id, filename: 'x.pdf', file: pdf(2000), actorId }).catch((e) => e);
		const ms = performance.now() - started;
		expect(err).toBeInstanceOf(StorageUnavailable);
		expect(err.status).toBe(503);
		// The total limit, and a margin for a busy machine; without limits it took over 100 s.
		expect(ms).toBeLessThan(S3_TIMEOUTS.totalMs + 3000);
		expect((await db.select({ n: count() }).from(t.datasheets))[0].n).toBe(before);
		console.log(`[figures] hung S3: 503 after ${(ms / 1000).toFixed(1)} s`);
	}, 30_000);

	it('gives up a mail delivery to a server that never greets, or greets and then hangs', async () => {
		for (const port of [silentPort, greetPort]) {
			const send = createMailer(`smtp://127.0.0.1:${port}`, () => 'Glasscrib test <glasscrib@localhost>');
			const started = performance.now();
			const err = await send({ to: 'someone@tarnwell.example', subject: 'hello', text: 'hello' }).catch((e) => e);
			const ms = performance.now() - started;
			expect(err).toBeInstanceOf(Error);
			expect(ms).toBeLessThan(MAIL_TIMEOUTS.totalMs + 3000);
			console.log(`[figures] hung SMTP (${port === silentPort ? 'no greeting' : 'silent after greeting'}): gave up after ${(ms / 1000).toFixed(1)} s (${err.message})`);
		}
	}, 40_000);
});
