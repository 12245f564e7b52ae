/**
 * The one way to run multi-row writes: `inTransaction(db, fn, opts)`.
 *
 * InnoDB answers a lock cycle with ER_LOCK_DEADLOCK (1213) and rolls the victim's whole
 * transaction back; a row held too long gives ER_LOCK_WAIT_TIMEOUT (1205), which rolls back only
 * the statement (we roll back the rest). Galera reports a certification failure as 1213 too.
 * All three are safe to retry from the start, so the helper runs `fn` again, a bounded number of
 * times, after a jittered, growing pause. A unique index refusing a row (ER_DUP_ENTRY, 1062: two
 * requests creating one SKU or location code at once) becomes a 409 DomainError naming the field
 * (`db/unique.ts`). Anything else (including DomainErrors) passes through.
 *
 * Called with an open transaction (`tx`), it runs `fn` in it, with no savepoint and no retry: the
 * outermost `inTransaction` owns the retry, since a deadlock has already undone the outer work
 * (and a savepoint would be gone with it).
 *
 * `fn` may run more than once: keep side effects outside the database (mail, S3) idempotent or
 * after the commit.
 */
import { MySqlTransaction, type MySqlTransactionConfig } from 'drizzle-orm/mysql-core';
import { DomainError } from '$lib/server/errors';
import type { DbOrTx, Tx } from './client';
import { dbErrno, isRetryable } from './errno';
import { duplicateOf } from './unique';

export { dbErrno, isRetryable, RETRYABLE_ERRNOS } from './errno';

export interface TransactionOptions extends Partial<MySqlTransactionConfig> {
	/** Attempts in all, the first included (default 8: on a Galera cluster, writes split across nodes
	 *  meet certification conflicts in bursts; 5 ran out once in 320 split operations). */
	attempts?: number;
	/** Pause before the second attempt in ms (default 20); doubled after each failure, full jitter. */
	backoffMs?: number;
	/** Upper bound of one pause in ms (default 1000). */
	maxBackoffMs?: number;
	/** Called before each retry (logging, tests). */
	onRetry?: (info: { attempt: number; errno: number; delayMs: number }) => void;
}

/** Retries taken by this process since it started (for the cluster figures and the logs). */
const retries = { count: 0 };
export function transactionRetries(): number {
	return retries.count;
}

/** Runs `fn` in a transaction on `db`, retrying deadlocks and lock-wait timeouts (see the module note). */
export async function inTransaction<T>(db: DbOrTx, fn: (tx: Tx) => Promise<T>, opts: TransactionOptions = {}): Promise<T> {
	if (db instanceof MySqlTransaction) return fn(db as Tx);
	const { attempts = 8, backoffMs = 20, maxBackoffMs = 1000, onRetry, ...config } = opts;
	const hasConfig = Object.values(config).some((v) => v !== undefined);
	for (let attempt = 1; ; attempt++) {
		try {
			return await (hasConfig ? db.transaction(fn, config as MySqlTransactionConfig) : db.transaction(fn));
		} catch (err) {
			if (attempt >= attempts || !isRetryable(err)) {
				const dup = duplicateOf(err);
				throw dup ? new DomainError(409, dup.code, dup.message, dup.fields) : err;
			}
			const delayMs = Math.random() * Math.min(maxBackoffMs, backoffMs * 2 ** (attempt - 1));
			retries.count++;
			onRetry?.({ attempt, errno: dbErrno(err)!, delayMs });
			await new Promise((r) => setTimeout(r, delayMs));
		}
	}
}
