import { sql } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { stockVersion } from '$lib/server/db/schema';

/**
 * Bumps the stock version. Call it inside the same transaction as any change to parts, surfaces,
 * measurements, stock or reservations: the solver's in-memory snapshot is keyed by this number.
 */
export async function bumpStockVersion(tx: DbOrTx) {
	await tx
		.insert(stockVersion)
		.values({ id: 1, version: 1 })
		.onDuplicateKeyUpdate({ set: { version: sql`${stockVersion.version} + 1` } });
}

/** The current stock version (0 when nothing was ever recorded). */
export async function currentStockVersion(db: DbOrTx): Promise<number> {
	const [row] = await db.select({ v: stockVersion.version }).from(stockVersion).limit(1);
	return row?.v ?? 0;
}
