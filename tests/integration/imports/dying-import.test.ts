/**
 * Imports that die (issue 13, item 5): the database connection goes away in the middle of a commit.
 * The run is marked failed with a message as soon as the app can write it (by the run itself, or by
 * the watchdog), counts never claim rows that were not written, and a caller that waits for the run
 * gets a clear 503 instead of a bare 500. The connection is cut with a TCP relay between the run's
 * own pool and MariaDB, so the shared test database stays up for everyone else.
 */
import net from 'node:net';
import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import * as t from '../../../src/lib/server/db/schema';
import { createDb } from '../../../src/lib/server/db/client';
import { DomainError } from '../../../src/lib/server/errors';
import * as importsService from '../../../src/lib/server/imports/service';
import { pendingOutcomes, STALE_AFTER_MS } from '../../../src/lib/server/imports/run';
import { INTERRUPTED_MESSAGE, sweepImports } from '../../../src/lib/server/imports/watchdog';
import { PCX_HEADER, countParts, db, deleteParts, pcxRow, pool, store, upload } from './helpers';

const tag = `DI${Date.now().toString(36).toUpperCase()}`;

afterAll(async () => {
	await deleteParts(tag);
	await pool.end();
});

/** A TCP relay to MariaDB that can cut every connection and refuse new ones until `reopen`. */
async function relay() {
	const target = new URL(process.env.DATABASE_URL!);
	const sockets = new Set<net.Socket>();
	let open = true;
	const server = net.createServer((client) => {
		if (!open) return client.destroy();
		const upstream = net.connect(Number(target.port), target.hostname);
		for (const s of [client, upstream]) {
			sockets.add(s);
			s.on('close', () => sockets.delete(s));
			s.on('error', () => {});
		}
		client.pipe(upstream).pipe(client);
	});
	await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
	const port = (server.address() as net.AddressInfo).port;
	const url = new URL(process.env.DATABASE_URL!);
	url.hostname = '127.0.0.1';
	url.port = String(port);
	return {
		url: url.toString(),
		cut() {
			open = false;
			for (const s of sockets) s.destroy();
		},
		reopen() {
			open = true;
		},
		close: () => new Promise<void>((r) => server.close(() => r()))
	};
}

const csvOf = (prefix: string, n: number) => PCX_HEADER + '\n' + Array.from({ length: n }, (_, i) => pcxRow(`${prefix}${i}`, i)).join('\n') + '\n';

describe('an import whose database connection dies', () => {
	it('a file refused for one bad row claims no created rows', async () => {
		const prefix = `${tag}-BAD-`;
		const rows = Array.from({ length: 20 }, (_, i) => pcxRow(`${prefix}${i}`, i));
		rows[19] = rows[19].replace('25.4', 'wide');
		const { id, actorId } = await upload(PCX_HEADER + '\n' + rows.join('\n') + '\n');
		const out = await importsService.runNow(db, store, id, 'commit', actorId);
		expect(out).toMatchObject({ status: 'failed', created: 0, updated: 0, unchanged: 0, rejected: 1 });
		const [rec] = await db.select().from(t.imports).where(eq(t.imports.id, id));
		expect(rec).toMatchObject({ status: 'failed', created: 0, updated: 0, unchanged: 0, rejected: 1 });
		expect(await countParts(prefix)).toBe(0);
	});

	it('cut for a moment: the run records "failed" with a message itself, and claims nothing', async () => {
		const prefix = `${tag}-BLIP-`;
		const { id, actorId } = await upload(csvOf(prefix, 200));
		const r = await relay();
		const runDb = createDb(r.url, 3);
		let claimedWhileRunning = -1;
		try {
			const out = await importsService.runNow(runDb.db, store, id, 'commit', actorId, {
				batchRows: 50,
				hooks: {
					afterBatch: async ({ batch }) => {
						if (batch !== 2) return;
						// What the record says while the transaction is open (read on the healthy pool).
						claimedWhileRunning = (await db.select().from(t.imports).where(eq(t.imports.id, id)))[0].created;
						r.cut();
						setTimeout(() => r.reopen(), 1200);
					}
				}
			});
			expect(out.status).toBe('failed');
			expect(out.message).toMatch(/stopped.*Nothing was written/);
			expect(out).toMatchObject({ created: 0, updated: 0, unchanged: 0 });
		} finally {
			await runDb.pool.end().catch(() => {});
			await r.close();
		}
		expect(claimedWhileRunning).toBe(0);
		const [rec] = await db.select().from(t.imports).where(eq(t.imports.id, id));
		expect(rec).toMatchObject({ status: 'failed', created: 0, updated: 0, unchanged: 0 });
		expect(rec.message).toMatch(/Nothing was written/);
		expect(await countParts(prefix)).toBe(0);
	});

	it('cut for good: the caller gets a 503 DomainError, the watchdog records "failed" once the database answers', async () => {
		const prefix = `${tag}-GONE-`;
		const { id, actorId } = await upload(csvOf(prefix, 200));
		const r = await relay();
		const runDb = createDb(r.url, 3);
		try {
			const err = await importsService
				.runNow(runDb.db, store, id, 'commit', actorId, {
					batchRows: 50,
					outcomeRetryMs: [50, 50],
					hooks: { afterBatch: ({ batch }) => void (batch === 2 && r.cut()) }
				})
				.catch((e: unknown) => e);
			expect(err).toBeInstanceOf(DomainError);
			expect(err).toMatchObject({ status: 503, code: 'database-unavailable' });
			expect((err as Error).message).toMatch(/Nothing was written/);
		} finally {
			await runDb.pool.end().catch(() => {});
			await r.close();
		}
		// Still "committing" (nobody could write), but claiming no rows.
		let [rec] = await db.select().from(t.imports).where(eq(t.imports.id, id));
		expect(rec).toMatchObject({ status: 'committing', created: 0, updated: 0, unchanged: 0 });
		expect(pendingOutcomes.has(id)).toBe(true);
		// The watchdog's next pass (with the database back) writes the run's own outcome at once.
		await sweepImports(db);
		[rec] = await db.select().from(t.imports).where(eq(t.imports.id, id));
		expect(rec).toMatchObject({ status: 'failed', created: 0, updated: 0, unchanged: 0 });
		expect(rec.message).toMatch(/stopped.*Nothing was written/);
		expect(await countParts(prefix)).toBe(0);
	});

	it('an import left "committing" by a process that died is settled by the watchdog: failed, or committed when its rows are there', async () => {
		const { id: lost } = await upload(csvOf(`${tag}-LOST-`, 3));
		await importsService.beginRun(db, lost, 'commit');
		await db.update(t.imports).set({ created: 3 }).where(eq(t.imports.id, lost)); // what an older version left behind
		const { id: done, actorId } = await upload(csvOf(`${tag}-DONE-`, 3));
		await importsService.runNow(db, store, done, 'commit', actorId);
		await db.update(t.imports).set({ status: 'committing' }).where(eq(t.imports.id, done)); // as if the outcome was never written
		const later = Date.now() + STALE_AFTER_MS + 5_000;
		const result = await sweepImports(db, later);
		expect(result.failed).toBeGreaterThanOrEqual(1);
		const [a] = await db.select().from(t.imports).where(eq(t.imports.id, lost));
		expect(a).toMatchObject({ status: 'failed', message: INTERRUPTED_MESSAGE, created: 0 });
		const [b] = await db.select().from(t.imports).where(eq(t.imports.id, done));
		expect(b).toMatchObject({ status: 'committed', created: 3 });
	});
});
