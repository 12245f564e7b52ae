/**
 * The transaction helper against real lock conflicts in MariaDB: a true deadlock (two
 * transactions locking two rows in opposite orders) and a lock-wait timeout.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import type { Tx } from '../../../src/lib/server/db/client';
import { dbErrno, inTransaction } from '../../../src/lib/server/db/transaction';

const { db, pool } = testDb();
let rowA = 0;
let rowB = 0;

beforeAll(async () => {
	const locs = await db.select({ id: t.locations.id }).from(t.locations).orderBy(t.locations.id).limit(2);
	[rowA, rowB] = locs.map((l) => l.id);
});
afterAll(async () => {
	await pool.end();
});

/** A promise to wait on and its resolver. */
function gate() {
	let open!: () => void;
	const p = new Promise<void>((r) => (open = r));
	return { p, open };
}

const lock = (tx: Tx, id: number) => tx.select({ id: t.locations.id }).from(t.locations).where(eq(t.locations.id, id)).for('update');

/**
 * Two transaction bodies that lock A then B, and B then A, each waiting until both hold their
 * first lock: InnoDB must pick one as the deadlock victim (on a retry the gates are open).
 */
function crossingBodies() {
	const firstA = gate();
	const firstB = gate();
	const one = async (tx: Tx) => {
		await lock(tx, rowA);
		firstA.open();
		await firstB.p;
		await lock(tx, rowB);
		return 'one';
	};
	const two = async (tx: Tx) => {
		await lock(tx, rowB);
		firstB.open();
		await firstA.p;
		await lock(tx, rowA);
		return 'two';
	};
	return { one, two };
}

describe('inTransaction', () => {
	it('the crossing lock order really deadlocks without the helper (errno 1213)', async () => {
		const { one, two } = crossingBodies();
		const results = await Promise.allSettled([db.transaction(one), db.transaction(two)]);
		const failed = results.filter((r): r is PromiseRejectedResult => r.status === 'rejected');
		expect(failed).toHaveLength(1);
		expect(dbErrno(failed[0].reason)).toBe(1213);
	});

	it('retries the deadlock victim, so both transactions commit', async () => {
		const { one, two } = crossingBodies();
		const retries: number[] = [];
		const onRetry = ({ errno }: { errno: number }) => retries.push(errno);
		const results = await Promise.all([inTransaction(db, one, { onRetry }), inTransaction(db, two, { onRetry })]);
		expect(results.sort()).toEqual(['one', 'two']);
		expect(retries).toEqual([1213]);
	});

	it('retries a lock-wait timeout (errno 1205) once the holder lets go', async () => {
		const holder = await pool.getConnection();
		try {
			await holder.query('start transaction');
			await holder.query('select id from locations where id = ? for update', [rowA]);
			const retries: number[] = [];
			const waiter = inTransaction(
				db,
				async (tx) => {
					await tx.execute(sql`set innodb_lock_wait_timeout = 1`);
					await lock(tx, rowA);
					return 'done';
				},
				{ onRetry: ({ errno }) => retries.push(errno), backoffMs: 1 }
			);
			// Held for longer than one wait (1 s), released before the retries run out.
			await new Promise((r) => setTimeout(r, 1500));
			await holder.query('commit');
			expect(await waiter).toBe('done');
			expect(retries.length).toBeGreaterThanOrEqual(1);
			expect(retries.every((e) => e === 1205)).toBe(true);
		} finally {
			await holder.query('rollback').catch(() => {});
			holder.release();
		}
	});

	it('gives up after the bounded number of attempts and throws the database error', async () => {
		const holder = await pool.getConnection();
		try {
			await holder.query('start transaction');
			await holder.query('select id from locations where id = ? for update', [rowB]);
			let calls = 0;
			const err = await inTransaction(
				db,
				async (tx) => {
					calls++;
					await tx.execute(sql`set innodb_lock_wait_timeout = 1`);
					await lock(tx, rowB);
				},
				{ attempts: 2, backoffMs: 1 }
			).catch((e: unknown) => e);
			expect(calls).toBe(2);
			expect(dbErrno(err)).toBe(1205);
		} finally {
			await holder.query('rollback').catch(() => {});
			holder.release();
		}
	});

	it('does not retry other errors, and runs inside an open transaction without a second retry loop', async () => {
		let calls = 0;
		const err = await inTransaction(db, async () => {
			calls++;
			throw new Error('not a lock problem');
		}).catch((e: unknown) => e);
		expect((err as Error).message).toBe('not a lock problem');
		expect(calls).toBe(1);
		const nested = await inTransaction(db, (tx) => inTransaction(tx, async (sp) => (await lock(sp, rowA)).length));
		expect(nested).toBe(1);
	});
});
