/**
 * Throttling of sign-in (and of other abusable forms) per account and per client address. Every
 * counted attempt is a row in `signin_failures`, so all app instances share the counts.
 * Rule: 5 counted attempts in a bucket within 15 minutes blocks that bucket until the oldest of them
 * leaves the window.
 *
 * `takeAttempt` counts first and checks after: it inserts the attempt's row, then counts the rows of
 * the bucket up to its own (by id). Of a burst of parallel attempts only the first 5 rows can see 5
 * or fewer, so at most 5 are evaluated, however many arrive at once (checking first and counting
 * after let every request of a burst see the same old count).
 */
import { and, asc, count, eq, gte, inArray, lt, lte } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { signinFailures } from '$lib/server/db/schema';

export const THROTTLE_LIMIT = 5;
export const THROTTLE_WINDOW_MS = 15 * 60 * 1000;

/** Bucket names; e-mails are compared lower-case. */
export const buckets = {
	account: (email: string) => `account:${email.trim().toLowerCase()}`.slice(0, 300),
	ip: (address: string) => `ip:${address}`.slice(0, 300),
	resetAccount: (email: string) => `reset:${email.trim().toLowerCase()}`.slice(0, 300),
	resetIp: (address: string) => `reset-ip:${address}`.slice(0, 300),
	/** Wrong two-step codes (and wrong passwords when turning it off) of one user. */
	secondFactor: (userId: number) => `totp:${userId}`,
	/** Wrong current passwords of a signed-in user (new token, password change, two-step off). */
	recheck: (userId: number) => `recheck:${userId}`
};

/**
 * Seconds until every given bucket is below the limit again; 0 when none is blocked.
 */
export async function retryAfterSeconds(db: DbOrTx, bucketNames: string[], now = new Date()): Promise<number> {
	const since = new Date(now.getTime() - THROTTLE_WINDOW_MS);
	const rows = await db
		.select({ bucket: signinFailures.bucket, at: signinFailures.at })
		.from(signinFailures)
		.where(and(inArray(signinFailures.bucket, bucketNames), gte(signinFailures.at, since)))
		.orderBy(asc(signinFailures.at));
	let wait = 0;
	for (const name of bucketNames) {
		const times = rows.filter((r) => r.bucket === name).map((r) => new Date(r.at).getTime());
		if (times.length < THROTTLE_LIMIT) continue;
		// The bucket is free again once all but LIMIT-1 of its attempts have left the window.
		const freeAt = times[times.length - THROTTLE_LIMIT] + THROTTLE_WINDOW_MS;
		wait = Math.max(wait, Math.ceil((freeAt - now.getTime()) / 1000));
	}
	return Math.max(wait, 0);
}

/** Counts one attempt in each bucket, and forgets attempts of these buckets older than the window. */
export async function countAttempt(db: DbOrTx, bucketNames: string[], now = new Date()) {
	await db.insert(signinFailures).values(bucketNames.map((bucket) => ({ bucket, at: now })));
	const cutoff = new Date(now.getTime() - THROTTLE_WINDOW_MS);
	await db.delete(signinFailures).where(and(inArray(signinFailures.bucket, bucketNames), lt(signinFailures.at, cutoff)));
}

export type Taken = { ok: true; ids: number[] } | { ok: false; retryAfterSeconds: number };

/**
 * Counts one attempt in each bucket, then checks: refused (and not counted) when a bucket holds more
 * than the limit up to this attempt. The caller evaluates the attempt only when it was taken; to not
 * count a success, it gives the ids back with `forget`.
 */
export async function takeAttempt(db: DbOrTx, bucketNames: string[], now = new Date()): Promise<Taken> {
	const ids: number[] = [];
	for (const bucket of bucketNames) {
		const [{ id }] = await db.insert(signinFailures).values({ bucket, at: now }).$returningId();
		ids.push(id);
	}
	const since = new Date(now.getTime() - THROTTLE_WINDOW_MS);
	let over = false;
	for (const [k, bucket] of bucketNames.entries()) {
		const [{ n }] = await db
			.select({ n: count() })
			.from(signinFailures)
			.where(and(eq(signinFailures.bucket, bucket), gte(signinFailures.at, since), lte(signinFailures.id, ids[k])));
		if (n > THROTTLE_LIMIT) over = true;
	}
	if (over) {
		await forget(db, ids);
		return { ok: false, retryAfterSeconds: Math.max(1, await retryAfterSeconds(db, bucketNames, now)) };
	}
	await db.delete(signinFailures).where(and(inArray(signinFailures.bucket, bucketNames), lt(signinFailures.at, since)));
	return { ok: true, ids };
}

/** Takes back attempts counted by `takeAttempt` (a success that must not count). */
export async function forget(db: DbOrTx, ids: number[]) {
	if (ids.length) await db.delete(signinFailures).where(inArray(signinFailures.id, ids));
}

/** Forgets the attempts of one bucket (the account's own counter after a successful sign-in). */
export async function clearBucket(db: DbOrTx, bucket: string) {
	await db.delete(signinFailures).where(eq(signinFailures.bucket, bucket));
}

/** "3 minutes" / "40 seconds", for messages on forms. */
export function waitText(seconds: number): string {
	if (seconds >= 90) return `${Math.ceil(seconds / 60)} minutes`;
	return `${seconds} second${seconds === 1 ? '' : 's'}`;
}
