import { sql } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { stockVersion } from '$lib/server/db/schema';

/**
 * Bumps the stock version. Call it inside the same transaction as any change to parts, surfaces,
 * measurements, stock or reservations: the solver's in-memory snapshot is keyed by this number.
 *
 * The version is the sum of one counter per database server (row id = the server's `server_id`;
 * a single server has one row). On a Galera cluster one shared row would be written by every
 * stock change on every node, so any two concurrent changes on two nodes would conflict at commit
 * (a deadlock error, and a long import could never commit while stock moves elsewhere); one row
 * per node keeps them apart, and the sum still grows with every change.
 */
export async function bumpStockVersion(tx: DbOrTx) {
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
