/**
 * Throttling of sign-in (and of other abusable forms) per account and per client address. Every
 * counted attempt is a row in `signin_failures`, so all app instances share the counts.
 * Rule: 5 counted attempts in a bucket within 15 minutes blocks that bucket until the oldest of them
 * leaves the window.
 */
import { and, asc, eq, gte, inArray, lt } from 'drizzle-orm';
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
	secondFactor: (userId: number) => `totp:${userId}`
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

/** Forgets the attempts of one bucket (the account's own counter after a successful sign-in). */
export async function clearBucket(db: DbOrTx, bucket: string) {
	await db.delete(signinFailures).where(eq(signinFailures.bucket, bucket));
}

/** "3 minutes" / "40 seconds", for messages on forms. */
export function waitText(seconds: number): string {
	if (seconds >= 90) return `${Math.ceil(seconds / 60)} minutes`;
	return `${seconds} second${seconds === 1 ? '' : 's'}`;
}
