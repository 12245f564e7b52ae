import { drizzle } from 'drizzle-orm/mysql2';
import mysql from 'mysql2/promise';
import * as schema from './schema';

/** Creates a mysql2 pool and the Drizzle database on it. Used by the app, the seed and the tests. */
export function createDb(url: string, connectionLimit = 10) {
	const pool = mysql.createPool({
		uri: url,
		connectionLimit,
		// DATETIME columns hold UTC; read and write them as UTC whatever the host's zone.
		timezone: 'Z',
		dateStrings: false,
		supportBigNumbers: true
	});
	const db = drizzle(pool, { schema, mode: 'default' });
	return { db, pool };
}

export type Db = ReturnType<typeof createDb>['db'];
/** A transaction handle has the same query API as the database. */
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
/** Either the database or an open transaction. */
export type DbOrTx = Db | Tx;
