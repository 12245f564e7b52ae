/**
 * Helpers for the cluster tests (run by `npm run test:cluster`, which starts three Galera nodes, app
 * instances A (on node 1) and B (on node 2), HAProxy in front, and sets the variables read here).
 */
import fs from 'node:fs';
import { inArray, sql } from 'drizzle-orm';
import { createDb } from '../../src/lib/server/db/client';
import * as t from '../../src/lib/server/db/schema';
import { testEnv } from '../support/env';

export const nodeUrls: string[] = JSON.parse(testEnv('CLUSTER_NODE_URLS'));
export const appUrls: string[] = JSON.parse(testEnv('CLUSTER_APP_URLS'));
export const appNodes: number[] = JSON.parse(testEnv('CLUSTER_APP_NODES'));
/** HAProxy's address: the public origin of both instances. */
export const lbUrl = testEnv('APP_URL');
export const DEMO_PASSWORD = 'tarnwell-bench-2026';

/** A Drizzle database on node `n` (1-based). */
export function nodeDb(n: number, connections = 5) {
	return createDb(nodeUrls[n - 1], connections);
}

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** Appends a measured figure for the run's summary (printed by scripts/test-cluster.mjs). */
export function figure(what: string, value: string | number, note?: string) {
	const line = JSON.stringify({ what, value, note }) + '\n';
	const file = process.env.CLUSTER_FIGURES;
	if (file) fs.appendFileSync(file, line);
	console.log(`[figure] ${what}: ${value}${note ? ` (${note})` : ''}`);
}

/** Signs in through HAProxy (which adds X-Forwarded-For) and returns the session cookie. Sessions live in the database, so it works on every instance. */
export async function signIn(email: string): Promise<string> {
	const res = await fetch(`${lbUrl}/api/v1/session`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', origin: lbUrl },
		body: JSON.stringify({ email, password: DEMO_PASSWORD })
	});
	if (res.status !== 200) throw new Error(`sign-in of ${email} answered ${res.status}: ${await res.text()}`);
	const cookie = res.headers.getSetCookie().find((c) => /^(__Host-)?gc_session=/.test(c));
	if (!cookie) throw new Error('no session cookie');
	return cookie.split(';')[0];
}

export interface Answer {
	status: number;
	body: any; // eslint-disable-line @typescript-eslint/no-explicit-any
	ms: number;
}

/** A JSON request to `base` (an instance or HAProxy) with a session cookie; network errors come back as status 0. */
export async function call(base: string, cookie: string, method: string, path: string, body?: unknown, timeoutMs = 60_000): Promise<Answer> {
	const start = performance.now();
	try {
		const res = await fetch(`${base}${path}`, {
			method,
			headers: { cookie, origin: lbUrl, ...(body === undefined ? {} : { 'content-type': 'application/json' }) },
			body: body === undefined ? undefined : JSON.stringify(body),
			signal: AbortSignal.timeout(timeoutMs)
		});
		const text = await res.text();
		let parsed: unknown = text;
		try {
			parsed = JSON.parse(text);
		} catch {
			/* not JSON */
		}
		return { status: res.status, body: parsed, ms: performance.now() - start };
	} catch (err) {
		return { status: 0, body: String(err), ms: performance.now() - start };
	}
}

/** Asks the test runner to kill (SIGKILL) or start database node `n`; resolves with its state. */
export async function controlNode(n: number, action: 'kill' | 'start' | 'state'): Promise<string | null> {
	const res = await fetch(`${testEnv('CLUSTER_CONTROL')}/nodes/${n}/${action}`, { method: 'POST' });
	const body = (await res.json()) as { state?: string | null; error?: string };
	if (!res.ok) throw new Error(`node ${n} ${action}: ${body.error}`);
	return body.state ?? null;
}

type Db = ReturnType<typeof createDb>['db'];

/** Global status values of one node (numbers where they are numbers). */
export async function nodeStatus(db: Db, names: string[]): Promise<Record<string, string>> {
	const [rows] = (await db.execute(sql`show global status where Variable_name in (${sql.join(
		names.map((n) => sql`${n}`),
		sql`, `
	)})`)) as unknown as [{ Variable_name: string; Value: string }[]];
	return Object.fromEntries(rows.map((r) => [r.Variable_name, r.Value]));
}

/**
 * Transactions the cluster aborted for a conflict with another node's write set, summed over nodes:
 * certification failures (the write set of a transaction lost to an earlier one at commit) and
 * brute-force aborts (a local transaction killed by a replicated one that touched its rows). Each
 * reaches the app as a deadlock error (1213), which the transaction helper retries.
 */
export async function conflictCount(dbs: Db[]): Promise<number> {
	let n = 0;
	for (const db of dbs) {
		const s = await nodeStatus(db, ['wsrep_local_cert_failures', 'wsrep_local_bf_aborts']);
		n += Number(s.wsrep_local_cert_failures ?? 0) + Number(s.wsrep_local_bf_aborts ?? 0);
	}
	return n;
}

/**
 * What a node holds for some parts: stock rows, and per (part, location, condition) the ledger's sum
 * (units in minus units out). Compared across nodes, and ledger against stock.
 */
export async function holdings(db: Db, partIds: number[]) {
	const stock = await db
		.select({ partId: t.stock.partId, locationId: t.stock.locationId, condition: t.stock.condition, quantity: t.stock.quantity })
		.from(t.stock)
		.where(inArray(t.stock.partId, partIds));
	const ids = sql.join(
		partIds.map((id) => sql`${id}`),
		sql`, `
	);
	const [rows] = (await db.execute(sql`
		select part_id, location_id, cond, sum(q) as units, count(*) as n from (
			select part_id, to_location_id as location_id, to_condition as cond, quantity as q from movements where part_id in (${ids}) and to_location_id is not null
			union all
			select part_id, from_location_id, from_condition, -quantity from movements where part_id in (${ids}) and from_location_id is not null
		) m group by part_id, location_id, cond`)) as unknown as [{ part_id: number; location_id: number; cond: string; units: string; n: number }[]];
	const key = (p: number, l: number, c: string) => `${p}/${l}/${c}`;
	const stockMap = Object.fromEntries(
		stock
			.filter((s) => s.quantity !== 0)
			.map((s) => [key(s.partId, s.locationId, s.condition), s.quantity])
			.sort()
	);
	const ledgerMap = Object.fromEntries(
		rows
			.filter((r) => Number(r.units) !== 0)
			.map((r) => [key(Number(r.part_id), Number(r.location_id), r.cond), Number(r.units)])
			.sort()
	);
	const [[{ movements }]] = (await db.execute(sql`select count(*) as movements from movements where part_id in (${ids})`)) as unknown as [
		{ movements: number }[]
	];
	const minQuantity = Math.min(0, ...stock.map((s) => s.quantity));
	return { stock: stockMap, ledger: ledgerMap, movements: Number(movements), minQuantity };
}

/** Runs `worker(k)` for k in 0..n-1 at once and waits for all. */
export async function parallel<T>(n: number, worker: (k: number) => Promise<T>): Promise<T[]> {
	return Promise.all(Array.from({ length: n }, (_, k) => worker(k)));
}
