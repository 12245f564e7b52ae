import { eq } from 'drizzle-orm';
import { z } from 'zod';
import type { DbOrTx } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import { randomBytes } from 'node:crypto';
import { hashPassword, verifyPassword } from '$lib/server/auth/password';
import * as throttle from '$lib/server/auth/throttle';

export const signinSchema = z
	.object({
		email: z.string().trim().toLowerCase().email('Enter an e-mail address.').max(254),
		password: z.string().min(1, 'Enter your password.').max(1024)
	})
	.strict();

/** A hash of a random password, verified against when the e-mail is unknown, so timing says nothing. */
let dummyHash: Promise<string> | undefined;
const dummy = () => (dummyHash ??= hashPassword(randomBytes(24).toString('base64')));

/** Checks e-mail and password; returns the active user or null, never saying which part was wrong. */
export async function checkCredentials(db: DbOrTx, email: string, password: string, pepper?: string) {
	const [user] = await db.select().from(users).where(eq(users.email, email)).limit(1);
	if (!user || !user.passwordHash) {
		await verifyPassword(await dummy(), password, pepper);
		return null;
	}
	const ok = await verifyPassword(user.passwordHash, password, pepper);
	if (!ok || user.status !== 'active') return null;
	return user;
}

export type SigninResult =
	| { ok: true; user: typeof users.$inferSelect }
	| { ok: false; reason: 'throttled'; retryAfterSeconds: number }
	| { ok: false; reason: 'invalid' };

/**
 * A sign-in attempt, throttled per account and per client address (5 failures in 15 minutes).
 * The attempt is counted before the password is looked at (`takeAttempt`), so a burst of parallel
 * tries gets at most 5 evaluated; a blocked attempt is refused without looking at the password. A
 * failure stays counted in both buckets; a success is taken back and clears only the account's own
 * counter, never the address counter.
 */
export async function attemptSignin(
	db: DbOrTx,
	input: { email: string; password: string; clientAddress: string; pepper?: string }
): Promise<SigninResult> {
	const names = [throttle.buckets.account(input.email), throttle.buckets.ip(input.clientAddress)];
	const taken = await throttle.takeAttempt(db, names);
	if (!taken.ok) return { ok: false, reason: 'throttled', retryAfterSeconds: taken.retryAfterSeconds };
	const user = await checkCredentials(db, input.email, input.password, input.pepper);
	if (!user) return { ok: false, reason: 'invalid' };
	await throttle.forget(db, taken.ids);
	await throttle.clearBucket(db, names[0]);
	return { ok: true, user };
}

export const INVALID_CREDENTIALS = 'That e-mail and password do not match an active account.';
export const throttledMessage = (seconds: number) =>
	`Too many failed sign-ins for this account or from this network. Try again in ${throttle.waitText(seconds)}.`;

/** Only local paths may be redirected to after sign-in. */
export function safeRedirect(target: string | null | undefined): string {
	if (!target || !target.startsWith('/') || target.startsWith('//') || target.startsWith('/\\')) return '/';
	return target;
}
