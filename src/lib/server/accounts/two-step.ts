/**
 * Two-step sign-in (a TOTP code from an authenticator app after the password): set-up and
 * confirmation on /account, the code at sign-in, turning it off, and an administrator removing it
 * from someone who lost their phone. The code arithmetic and secret encryption live in auth/totp.ts.
 *
 * Every code check locks the user row, so two requests with the same code cannot both pass, and
 * refuses a time step at or before the last accepted one (`totp_last_step`: a code works once).
 * Wrong codes count in the throttle bucket `totp:<userId>` (5 in 15 minutes block it).
 */
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import QRCode from 'qrcode';
import type { Db, Tx } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import { clearSecondFactorInTx, markSecondFactorInTx } from '$lib/server/auth/sessions';
import { Conflict, DomainError } from '$lib/server/errors';
import { recordAudit } from '$lib/server/audit';
import * as throttle from '$lib/server/auth/throttle';
import * as totp from '$lib/server/auth/totp';
import { confirmPassword } from './passwords';
import * as notify from './notify';
import { inTransaction } from '$lib/server/db/transaction';

const CODE_MESSAGE = 'Enter the 6-digit code from your authenticator app.';

/** The code field of a form or JSON body: 6 digits, spaces allowed ("123 456"). */
export const codeField = z
	.string({ message: CODE_MESSAGE })
	.max(20, CODE_MESSAGE)
	.transform((v, ctx) => {
		const code = totp.normaliseCode(v);
		if (!code) {
			ctx.addIssue({ code: 'custom', message: CODE_MESSAGE });
			return z.NEVER;
		}
		return code;
	});

export const codeSchema = z.object({ code: codeField }).strict();
export const turnOffSchema = z.object({ password: z.string().min(1, 'Enter your current password.').max(1024), code: codeField }).strict();

export class TwoStepAlreadyOn extends Conflict {
	constructor() {
		super('two-step-on', 'Two-step sign-in is already on.');
	}
}
export class TwoStepOff extends Conflict {
	constructor(message = 'Two-step sign-in is not on for this account.') {
		super('two-step-off', message);
	}
}
export class NoSetupStarted extends Conflict {
	constructor() {
		super('no-setup', 'Start the set-up first: the code must come from the secret shown on this page.');
	}
}

export type CodeResult =
	| { ok: true }
	| { ok: false; reason: 'throttled'; retryAfterSeconds: number }
	| { ok: false; reason: 'wrong-code' | 'used-code' | 'wrong-password' };

/** What a refused code or password tells the person. */
export function refusalText(result: Exclude<CodeResult, { ok: true }>): string {
	switch (result.reason) {
		case 'throttled':
			return `Too many wrong codes. Try again in ${throttle.waitText(result.retryAfterSeconds)}.`;
		case 'used-code':
			return 'That code has already been used. Wait for the next code in your app (a new one comes every 30 seconds).';
		case 'wrong-password':
			return 'That is not your current password.';
		default:
			return 'That code is not right. Check that your phone’s clock is correct and use the newest code.';
	}
}

/** Whether two-step sign-in is on, and since when. */
export async function status(db: Db, userId: number) {
	const [row] = await db
		.select({ enabledAt: users.totpEnabledAt, pending: users.totpPendingSecret })
		.from(users)
		.where(eq(users.id, userId))
		.limit(1);
	return { enabledAt: row?.enabledAt ?? null, settingUp: !row?.enabledAt && !!row?.pending };
}

/**
 * What the set-up shows while a secret is pending: the QR code (PNG data: URL) of the otpauth://
 * address and the secret in base32 for typing in. Null when no set-up is under way.
 */
export async function setupView(db: Db, user: { id: number; email: string }, pepper: string | undefined) {
	const [row] = await db.select({ enabledAt: users.totpEnabledAt, pending: users.totpPendingSecret }).from(users).where(eq(users.id, user.id)).limit(1);
	if (!row?.pending || row.enabledAt) return null;
	let secret: Uint8Array;
	try {
		secret = totp.decryptSecret(row.pending, user.id, pepper);
	} catch {
		return null; // e.g. AUTH_PEPPER changed since: the person starts again
	}
	const uri = totp.otpauthUri(secret, user.email);
	const qrDataUrl = await QRCode.toDataURL(uri, { type: 'image/png', errorCorrectionLevel: 'M', margin: 2, width: 232 });
	const base32 = totp.base32Of(secret);
	return { qrDataUrl, secretText: base32.replace(/(.{4})(?=.)/g, '$1 '), issuer: totp.TOTP_ISSUER, account: user.email };
}

/** Makes a new random secret and keeps it, encrypted, as the pending one (a set-up started again replaces it). */
export async function startSetup(db: Db, userId: number, pepper: string | undefined) {
	const pending = totp.encryptSecret(totp.newSecret(), userId, pepper);
	await inTransaction(db, async (tx) => {
		const user = await lockUser(tx, userId);
		if (user.totpEnabledAt) throw new TwoStepAlreadyOn();
		await tx.update(users).set({ totpPendingSecret: pending }).where(eq(users.id, userId));
	});
}

/** Forgets a pending set-up. */
export async function cancelSetup(db: Db, userId: number) {
	await db.update(users).set({ totpPendingSecret: null }).where(eq(users.id, userId));
}

async function lockUser(tx: Tx, userId: number) {
	const [user] = await tx.select().from(users).where(eq(users.id, userId)).limit(1).for('update');
	if (!user) throw new DomainError(404, 'not-found', 'No such user.');
	return user;
}

/** Checks a code against an encrypted secret of a locked user row; on success remembers the step. */
async function spendCode(tx: Tx, user: { id: number; totpLastStep: number | null }, stored: string, code: string, pepper: string | undefined, now: Date) {
	const step = totp.matchingStep(totp.decryptSecret(stored, user.id, pepper), code, now.getTime());
	if (step === null) return { ok: false as const, reason: 'wrong-code' as const };
	if (user.totpLastStep !== null && step <= user.totpLastStep) return { ok: false as const, reason: 'used-code' as const };
	return { ok: true as const, step };
}

/**
 * Runs a throttled code check: the attempt is counted first (`takeAttempt`, so a burst gets at most
 * the limit evaluated) and refused while a bucket is blocked; a failure stays counted, a success is
 * taken back and clears the buckets. `alsoBuckets`: turning two-step sign-in off re-asks the
 * password, so it counts in the password re-check bucket too.
 */
async function throttled(db: Db, userId: number, work: () => Promise<CodeResult>, now: Date, alsoBuckets: string[] = []): Promise<CodeResult> {
	const names = [throttle.buckets.secondFactor(userId), ...alsoBuckets];
	const taken = await throttle.takeAttempt(db, names, now);
	if (!taken.ok) return { ok: false, reason: 'throttled', retryAfterSeconds: taken.retryAfterSeconds };
	const result = await work();
	if (result.ok) {
		await throttle.forget(db, taken.ids);
		for (const name of names) await throttle.clearBucket(db, name);
	}
	return result;
}

/**
 * Confirms the set-up with a code of the pending secret: turns two-step sign-in on and marks the
 * session it was done in as having given the second factor (so an administrator can go on to the
 * admin pages without signing in again).
 */
export async function confirmSetup(
	db: Db,
	user: { id: number; email: string },
	sessionId: string | null,
	code: string,
	pepper: string | undefined,
	now = new Date()
): Promise<CodeResult> {
	const result = await throttled(
		db,
		user.id,
		() =>
			inTransaction(db, async (tx): Promise<CodeResult> => {
				const row = await lockUser(tx, user.id);
				if (row.totpEnabledAt) throw new TwoStepAlreadyOn();
				if (!row.totpPendingSecret) throw new NoSetupStarted();
				const check = await spendCode(tx, row, row.totpPendingSecret, code, pepper, now);
				if (!check.ok) return check;
				await tx
					.update(users)
					.set({ totpSecret: row.totpPendingSecret, totpPendingSecret: null, totpEnabledAt: now, totpLastStep: check.step })
					.where(eq(users.id, user.id));
				if (sessionId) await markSecondFactorInTx(tx, sessionId, now);
				await recordAudit(tx, { actorId: user.id, action: 'user.two-step-on', targetType: 'user', targetId: user.id });
				return { ok: true };
			}),
		now
	);
	if (result.ok) await notify.noticeTwoStepOn(user.email);
	return result;
}

/** Checks the code given at sign-in (the caller then replaces the session by one marked with the factor). */
export async function verifySignin(db: Db, userId: number, code: string, pepper: string | undefined, now = new Date()): Promise<CodeResult> {
	return throttled(
		db,
		userId,
		() =>
			inTransaction(db, async (tx): Promise<CodeResult> => {
				const row = await lockUser(tx, userId);
				if (!row.totpEnabledAt || !row.totpSecret) throw new TwoStepOff();
				const check = await spendCode(tx, row, row.totpSecret, code, pepper, now);
				if (!check.ok) return check;
				await tx.update(users).set({ totpLastStep: check.step }).where(eq(users.id, userId));
				return { ok: true };
			}),
		now
	);
}

/** Clears everything two-step of a user and the factor mark of their sessions (inside the caller's transaction). */
async function clearTwoStep(tx: Tx, userId: number) {
	await tx.update(users).set({ totpSecret: null, totpPendingSecret: null, totpEnabledAt: null, totpLastStep: null }).where(eq(users.id, userId));
	await clearSecondFactorInTx(tx, userId);
}

/** Turns two-step sign-in off; needs the current password and a current code. */
export async function turnOff(
	db: Db,
	user: { id: number; email: string },
	input: z.infer<typeof turnOffSchema>,
	pepper: string | undefined,
	now = new Date()
): Promise<CodeResult> {
	const result = await throttled(
		db,
		user.id,
		async () => {
			if (!(await confirmPassword(db, user.id, input.password, pepper))) return { ok: false, reason: 'wrong-password' };
			return inTransaction(db, async (tx): Promise<CodeResult> => {
				const row = await lockUser(tx, user.id);
				if (!row.totpEnabledAt || !row.totpSecret) throw new TwoStepOff();
				const check = await spendCode(tx, row, row.totpSecret, input.code, pepper, now);
				if (!check.ok) return check;
				await clearTwoStep(tx, user.id);
				await recordAudit(tx, { actorId: user.id, action: 'user.two-step-off', targetType: 'user', targetId: user.id });
				return { ok: true };
			});
		},
		now,
		[throttle.buckets.recheck(user.id)]
	);
	if (result.ok) await notify.noticeTwoStepOff(user.email);
	return result;
}

export class OwnTwoStep extends Conflict {
	constructor() {
		super('own-two-step', 'Turn your own two-step sign-in off on your account page (it asks for your password and a code).');
	}
}

/**
 * An administrator removes someone else's two-step sign-in (lost phone). The person signs in with the
 * password alone again and is told by mail; an administrator cannot do this to themselves here.
 */
export async function clearByAdmin(db: Db, actor: { id: number; name: string }, userId: number) {
	if (actor.id === userId) throw new OwnTwoStep();
	const target = await inTransaction(db, async (tx) => {
		const row = await lockUser(tx, userId);
		if (!row.totpEnabledAt) throw new TwoStepOff('Two-step sign-in is not on for this person.');
		await clearTwoStep(tx, userId);
		await recordAudit(tx, { actorId: actor.id, action: 'user.two-step-cleared', targetType: 'user', targetId: userId });
		return row;
	});
	await notify.noticeTwoStepCleared(target.email, actor.name);
}
