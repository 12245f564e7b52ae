import { sql } from 'drizzle-orm';
import type { DbOrTx, Tx } from '$lib/server/db';
import { stockVersion } from '$lib/server/db/schema';
import { inTransaction, type TransactionOptions } from '$lib/server/db/transaction';

/**
 * The one way to change what the solver sees (parts, surfaces, measurements, materials, lab
 * settings, stock, reservations): runs `fn` through `inTransaction` (or inside the caller's open
 * transaction) and bumps the stock version after it, in the same transaction. The solver's
 * in-memory snapshot is keyed by that number, so a write that skipped the bump would leave stale
 * answers; going through here, none can forget it. The version row is written last, which keeps
 * the lock order (part, reservations, stock rows, then the stock version).
 */
export async function changeStock<T>(db: DbOrTx, fn: (tx: Tx) => Promise<T>, opts?: TransactionOptions): Promise<T> {
	return inTransaction(
		db,
		async (tx) => {
			const out = await fn(tx);
			await bumpStockVersion(tx);
			return out;
		},
		opts
	);
}

/**
 * Bumps the stock version (only through `changeStock`).
 *
 * The version is the sum of one counter per database server (row id = the server's `server_id`;
 * a single server has one row). On a Galera cluster one shared row would be written by every
 * stock change on every node, so any two concurrent changes on two nodes would conflict at commit
 * (a deadlock error, and a long import could never commit while stock moves elsewhere); one row
 * per node keeps them apart, and the sum still grows with every change.
 */
async function bumpStockVersion(tx: DbOrTx) {
	await tx
		.insert(stockVersion)
		.values({ id: sql`least(@@server_id, 2147483647)`, version: 1 })
		.onDuplicateKeyUpdate({ set: { version: sql`${stockVersion.version} + 1` } });
}

/** The current stock version (0 when nothing was ever recorded). */
export async function currentStockVersion(db: DbOrTx): Promise<number> {
	const [row] = await db.select({ v: sql<string | null>`sum(${stockVersion.version})` }).from(stockVersion);
	return Number(row?.v ?? 0);
}
