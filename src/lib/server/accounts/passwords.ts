/**
 * Setting and changing passwords: from a one-time link (invitation or reset), from the account page
 * (with the current password), and asking for a reset link (same answer whether the address exists).
 */
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import { endAllSessionsInTx } from '$lib/server/auth/sessions';
import { hashPassword, verifyPassword } from '$lib/server/auth/password';
import { newPasswordSchema, passwordProblem } from '$lib/server/auth/password-policy';
import * as throttle from '$lib/server/auth/throttle';
import { recordAudit } from '$lib/server/audit';
import { checkLink, createLink, LINK_LIFETIME_MS, spendLink, type LinkCheck } from './links';
import * as notify from './notify';
import { inTransaction } from '$lib/server/db/transaction';

export const changePasswordSchema = z
	.object({ current: z.string().min(1, 'Enter your current password.').max(1024), password: newPasswordSchema, confirm: z.string() })
	.strict()
	.refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords differ.' });

export const resetRequestSchema = z.object({ email: z.string().trim().toLowerCase().email('Enter an e-mail address.').max(254) }).strict();

/**
 * Spends the link and sets the password, in one transaction (the link row is locked, so a second
 * submission finds it used). Ends every session of the user.
 */
export async function setPasswordFromLink(db: Db, token: string, password: string, pepper?: string): Promise<LinkCheck> {
	const hash = await hashPassword(password, pepper);
	const result = await inTransaction(db, async (tx): Promise<LinkCheck> => {
		const check = await checkLink(tx, token, { forUpdate: true });
		if (!check.ok) return check;
		const problem = passwordProblem(password, check.user.email);
		if (problem) throw new PasswordRefused(problem);
		await spendLink(tx, check.linkId);
		await tx.update(users).set({ passwordHash: hash }).where(eq(users.id, check.user.id));
		await endAllSessionsInTx(tx, check.user.id);
		await recordAudit(tx, {
			actorId: check.user.id,
			action: check.purpose === 'invite' ? 'user.invite-accepted' : 'user.password-reset',
			targetType: 'user',
			targetId: check.user.id
		});
		return check;
	});
	// A password chosen through a reset link is a change like any other: the owner is told (an invitation sets the first one).
	if (result.ok && result.purpose === 'reset') await notify.noticePasswordChanged(result.user.email);
	return result;
}

export class PasswordRefused extends Error {}

export type ChangeResult = { ok: true } | { ok: false; field: 'current' | 'password'; message: string; retryAfterSeconds?: number };

/** Changes the password after checking the current one; the caller ends the user's other sessions. */
export async function changePassword(
	db: Db,
	userId: number,
	input: { current: string; password: string },
	pepper?: string
): Promise<ChangeResult> {
	const [user] = await db.select().from(users).where(eq(users.id, userId)).limit(1);
	if (!user) return { ok: false, field: 'current', message: WRONG_PASSWORD };
	const check = await recheckPassword(db, userId, input.current, pepper);
	if (!check.ok) return { ok: false, field: 'current', message: recheckRefusal(check), retryAfterSeconds: check.reason === 'throttled' ? check.retryAfterSeconds : undefined };
	const problem = passwordProblem(input.password, user.email);
	if (problem) return { ok: false, field: 'password', message: problem };
	if (input.password === input.current) return { ok: false, field: 'password', message: 'Choose a password different from the current one.' };
	await inTransaction(db, async (tx) => {
		await tx.update(users).set({ passwordHash: await hashPassword(input.password, pepper) }).where(eq(users.id, userId));
		await recordAudit(tx, { actorId: userId, action: 'user.password-changed', targetType: 'user', targetId: userId });
	});
	await notify.noticePasswordChanged(user.email);
	return { ok: true };
}

/** Checks the current password of a user, unthrottled: callers use `recheckPassword` (or their own throttle). */
export async function confirmPassword(db: Db, userId: number, password: string, pepper?: string) {
	const [user] = await db.select({ hash: users.passwordHash }).from(users).where(eq(users.id, userId)).limit(1);
	return !!user?.hash && (await verifyPassword(user.hash, password, pepper));
}

export const WRONG_PASSWORD = 'That is not your current password.';

export type RecheckResult = { ok: true } | { ok: false; reason: 'wrong-password' } | { ok: false; reason: 'throttled'; retryAfterSeconds: number };

/**
 * Re-asks the current password before a sensitive step (new API token, password change; turning
 * two-step sign-in off counts in the same bucket). Throttled per user in `recheck:<userId>` like
 * sign-in (5 wrong in 15 minutes, counted before checking), so a stolen session cannot be used to
 * guess the password; a right one is not counted and clears the bucket.
 */
export async function recheckPassword(db: Db, userId: number, password: string, pepper?: string): Promise<RecheckResult> {
	const bucket = throttle.buckets.recheck(userId);
	const taken = await throttle.takeAttempt(db, [bucket]);
	if (!taken.ok) return { ok: false, reason: 'throttled', retryAfterSeconds: taken.retryAfterSeconds };
	if (!(await confirmPassword(db, userId, password, pepper))) return { ok: false, reason: 'wrong-password' };
	await throttle.forget(db, taken.ids);
	await throttle.clearBucket(db, bucket);
	return { ok: true };
}

export const recheckRefusal = (r: Exclude<RecheckResult, { ok: true }>) =>
	r.reason === 'throttled' ? `Too many wrong passwords. Try again in ${throttle.waitText(r.retryAfterSeconds)}.` : WRONG_PASSWORD;

/**
 * Asks for a reset link. Every request counts (per address and per client) and 5 in 15 minutes are
 * refused. The request itself does the same work whether or not the address has an account (the
 * throttle, then handing the address over); looking the account up, making the link and mailing it
 * happen after the answer (`deliverReset`), so neither the answer nor its timing says whether an
 * address has an account.
 */
export async function requestReset(
	db: Db,
	email: string,
	clientAddress: string,
	deliver: (db: Db, email: string) => Promise<void> = deliverReset
): Promise<{ ok: true } | { ok: false; retryAfterSeconds: number }> {
	const names = [throttle.buckets.resetAccount(email), throttle.buckets.resetIp(clientAddress)];
	const taken = await throttle.takeAttempt(db, names);
	if (!taken.ok) return { ok: false, retryAfterSeconds: taken.retryAfterSeconds };
	setImmediate(() => {
		deliver(db, email).catch((err) => console.error('could not send a reset link:', (err as Error).message));
	});
	return { ok: true };
}

/** Mails a reset link when an active account has the address (run after the request was answered). */
export async function deliverReset(db: Db, email: string): Promise<void> {
	const [user] = await db.select().from(users).where(eq(users.email, email)).limit(1);
	if (!user || user.status !== 'active') return;
	const token = await createLink(db, user.id, 'reset');
	await recordAudit(db, { actorId: null, action: 'user.reset-requested', targetType: 'user', targetId: user.id });
	await notify.sendReset(user, token, LINK_LIFETIME_MS.reset / 60_000);
}
