import { json } from '@sveltejs/kit';
import { sql } from 'drizzle-orm';
import { db } from '$lib/server/db';
import { transactionRetries } from '$lib/server/db/transaction';
import type { RequestHandler } from './$types';

type Row = { Variable_name: string; Value: string };

/** The rows of a SHOW statement through Drizzle's mysql2 driver ([rows, fields]). */
async function show(statement: ReturnType<typeof sql>): Promise<Record<string, string>> {
	const [rows] = (await db.execute(statement)) as unknown as [Row[]];
	return Object.fromEntries(rows.map((r) => [r.Variable_name, r.Value]));
}

/**
 * Liveness and database reachability, for the start script and load balancers, and how many transactions this
 * instance has retried (deadlocks, lock waits, Galera certification). Public.
 * On a Galera node the database counts as reachable only while the node is ready for queries (wsrep_ready):
 * a node that is joining, or copying its data to a joiner, keeps this instance out of the balancer until it is back.
 */
export const GET: RequestHandler = async () => {
	try {
		await db.execute(sql`select 1`);
		const wsrep = await show(sql`show variables like 'wsrep_on'`);
		if (wsrep.wsrep_on === 'ON') {
			const status = await show(sql`show status where Variable_name in ('wsrep_ready', 'wsrep_local_state_comment')`);
			if (status.wsrep_ready !== 'ON') {
				return json({ ok: false, database: 'not-ready', clusterState: status.wsrep_local_state_comment ?? null }, { status: 503 });
			}
		}
		return json({ ok: true, transactionRetries: transactionRetries() });
	} catch {
		return json({ ok: false, database: 'unreachable' }, { status: 503 });
	}
};
