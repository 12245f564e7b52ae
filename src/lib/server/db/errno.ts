/** The MariaDB error number of an error thrown by mysql2, looking through Drizzle's wrapping (`cause`). */
export function dbErrno(err: unknown): number | undefined {
	for (let e: unknown = err, depth = 0; e && typeof e === 'object' && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
		const errno = (e as { errno?: unknown }).errno;
		if (typeof errno === 'number') return errno;
	}
	return undefined;
}

/** The server's message (`sqlMessage`) of a mysql2 error, looking through Drizzle's wrapping. */
export function dbMessage(err: unknown): string {
	for (let e: unknown = err, depth = 0; e && typeof e === 'object' && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
		const m = (e as { sqlMessage?: unknown }).sqlMessage;
		if (typeof m === 'string') return m;
	}
	return '';
}

/** MariaDB error numbers that mean "run the transaction again" (Galera's certification failure is 1213 too). */
export const RETRYABLE_ERRNOS: ReadonlySet<number> = new Set([1213 /* ER_LOCK_DEADLOCK */, 1205 /* ER_LOCK_WAIT_TIMEOUT */]);

/** True for a deadlock, lock-wait timeout or certification failure: the transaction may be run again. */
export function isRetryable(err: unknown): boolean {
	const errno = dbErrno(err);
	return errno !== undefined && RETRYABLE_ERRNOS.has(errno);
}

/**
 * Errors by which the database refuses a value the validation should have caught (a string it cannot
 * store, too long, an impossible date, a number out of the column's range). The API answers them
 * with 400 as a last net; each one reached is a missing check at the edge.
 */
export const INPUT_ERRNOS: ReadonlySet<number> = new Set([
	1366 /* ER_TRUNCATED_WRONG_VALUE_FOR_FIELD: incorrect string value */,
	1406 /* ER_DATA_TOO_LONG */,
	1292 /* ER_TRUNCATED_WRONG_VALUE: incorrect datetime value */,
	1264 /* ER_WARN_DATA_OUT_OF_RANGE */,
	1048 /* ER_BAD_NULL_ERROR */
]);

const UNAVAILABLE_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'PROTOCOL_CONNECTION_LOST', 'PROTOCOL_SEQUENCE_TIMEOUT', 'ER_CON_COUNT_ERROR']);
const UNAVAILABLE_ERRNOS = new Set([1040 /* too many connections */, 1053 /* server shutdown */, 1927 /* connection killed */, 2006 /* server has gone away */, 2013 /* lost connection */]);

/** True when the database cannot be reached or dropped the connection: a 503, not a 500. */
export function isUnavailable(err: unknown): boolean {
	for (let e: unknown = err, depth = 0; e && typeof e === 'object' && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
		const { code, errno, fatal } = e as { code?: unknown; errno?: unknown; fatal?: unknown };
		if (typeof code === 'string' && UNAVAILABLE_CODES.has(code)) return true;
		if (typeof errno === 'number' && UNAVAILABLE_ERRNOS.has(errno)) return true;
		if (fatal === true && typeof code === 'string') return true;
		// mysql2, when a statement is sent on a connection that has already closed.
		if (e instanceof Error && /connection is in closed state/i.test(e.message)) return true;
	}
	return false;
}
