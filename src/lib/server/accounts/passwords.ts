/**
 * Setting and changing passwords: from a one-time link (invitation or reset), from the account page
 * (with the current password), and asking for a reset link (same answer whether the address exists).
 */
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '$lib/server/db';
import { sessions, users } from '$lib/server/db/schema';
import { hashPassword, verifyPassword } from '$lib/server/auth/password';
import { newPasswordSchema, passwordProblem } from '$lib/server/auth/password-policy';
import * as throttle from '$lib/server/auth/throttle';
import { recordAudit } from '$lib/server/audit';
import { checkLink, createLink, LINK_LIFETIME_MS, spendLink, type LinkCheck } from './links';
import * as notify from './notify';

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
	return db.transaction(async (tx) => {
		const check = await checkLink(tx, token, { forUpdate: true });
		if (!check.ok) return check;
		const problem = passwordProblem(password, check.user.email);
		if (problem) throw new PasswordRefused(problem);
		await spendLink(tx, check.linkId);
		await tx.update(users).set({ passwordHash: hash }).where(eq(users.id, check.user.id));
		await tx.delete(sessions).where(eq(sessions.userId, check.user.id));
		await recordAudit(tx, {
			actorId: check.user.id,
			action: check.purpose === 'invite' ? 'user.invite-accepted' : 'user.password-reset',
			targetType: 'user',
			targetId: check.user.id
		});
		return check;
	});
}

export class PasswordRefused extends Error {}

export type ChangeResult = { ok: true } | { ok: false; field: 'current' | 'password'; message: string };

/** Changes the password after checking the current one; the caller ends the user's other sessions. */
export async function changePassword(
	db: Db,
	userId: number,
	input: { current: string; password: string },
	pepper?: string
): Promise<ChangeResult> {
	const [user] = await db.select().from(users).where(eq(users.id, userId)).limit(1);
	if (!user?.passwordHash || !(await verifyPassword(user.passwordHash, input.current, pepper))) {
		return { ok: false, field: 'current', message: 'That is not your current password.' };
	}
	const problem = passwordProblem(input.password, user.email);
	if (problem) return { ok: false, field: 'password', message: problem };
	if (input.password === input.current) return { ok: false, field: 'password', message: 'Choose a password different from the current one.' };
	await db.transaction(async (tx) => {
		await tx.update(users).set({ passwordHash: await hashPassword(input.password, pepper) }).where(eq(users.id, userId));
		await recordAudit(tx, { actorId: userId, action: 'user.password-changed', targetType: 'user', targetId: userId });
	});
	await notify.noticePasswordChanged(user.email);
	return { ok: true };
}

/** Checks the current password of a user (to re-ask it before a sensitive step). */
export async function confirmPassword(db: Db, userId: number, password: string, pepper?: string) {
	const [user] = await db.select({ hash: users.passwordHash }).from(users).where(eq(users.id, userId)).limit(1);
	return !!user?.hash && (await verifyPassword(user.hash, password, pepper));
}

/**
 * Asks for a reset link. Every request counts (per address and per client) and 5 in 15 minutes are
 * refused; otherwise a link is mailed when an active account exists. The caller answers the same
 * either way, so nobody learns whether an address has an account.
 */
export async function requestReset(db: Db, email: string, clientAddress: string): Promise<{ ok: true } | { ok: false; retryAfterSeconds: number }> {
	const names = [throttle.buckets.resetAccount(email), throttle.buckets.resetIp(clientAddress)];
	const wait = await throttle.retryAfterSeconds(db, names);
	if (wait > 0) return { ok: false, retryAfterSeconds: wait };
	await throttle.countAttempt(db, names);
	const [user] = await db.select().from(users).where(eq(users.email, email)).limit(1);
	if (user && user.status === 'active') {
		const token = await createLink(db, user.id, 'reset');
		await recordAudit(db, { actorId: null, action: 'user.reset-requested', targetType: 'user', targetId: user.id });
		try {
			await notify.sendReset(user, token, LINK_LIFETIME_MS.reset / 60_000);
		} catch (err) {
			console.error('could not send a reset link:', (err as Error).message);
		}
	}
	return { ok: true };
}
