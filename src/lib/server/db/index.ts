import { env } from '$env/dynamic/private';
import { building } from '$app/environment';
import { createDb, type Db } from './client';

function connect(): Db {
	if (building) return {} as Db; // the build imports server modules without an environment
	if (!env.DATABASE_URL) throw new Error('DATABASE_URL is not set');
	return createDb(env.DATABASE_URL, Number(env.DB_POOL_SIZE ?? 10)).db;
}

/** The app's database: one mysql2 pool per process (it connects lazily, on the first query). */
export const db: Db = connect();

export type { Db, DbOrTx, Tx } from './client';
