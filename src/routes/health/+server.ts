import { json } from '@sveltejs/kit';
import { sql } from 'drizzle-orm';
import { db } from '$lib/server/db';
import { transactionRetries } from '$lib/server/db/transaction';
import type { RequestHandler } from './$types';

/** Liveness and database reachability, for the start script and load balancers, and how many transactions this
 * instance has retried (deadlocks, lock waits, Galera certification). Public. */
export const GET: RequestHandler = async () => {
	try {
		await db.execute(sql`select 1`);
		return json({ ok: true, transactionRetries: transactionRetries() });
	} catch {
		return json({ ok: false, database: 'unreachable' }, { status: 503 });
	}
};
