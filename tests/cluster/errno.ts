/** The MariaDB error number of an error from mysql2, looking through Drizzle's wrapping (`cause`). */
export function dbErrnoOf(err: unknown): number | undefined {
	for (let e: unknown = err, depth = 0; e && typeof e === 'object' && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
		const errno = (e as { errno?: unknown }).errno;
		if (typeof errno === 'number') return errno;
	}
	return undefined;
}
