/**
 * People and roles, for administrators: list, invite, change role, deactivate, reactivate.
 * The last active administrator can be neither demoted nor deactivated.
 */
import { and, asc, count, eq, inArray, isNull } from 'drizzle-orm';
import { z } from 'zod';
import type { Db, Tx } from '$lib/server/db';
import { apiTokens, ROLES, users, type Role } from '$lib/server/db/schema';
import { endAllSessionsInTx } from '$lib/server/auth/sessions';
import { Conflict, DomainError, NotFound } from '$lib/server/errors';
import { recordAudit } from '$lib/server/audit';
import { createLink, LINK_LIFETIME_MS } from './links';
import * as notify from './notify';
import { inTransaction } from '$lib/server/db/transaction';
import { ADMINS, inSet } from '$lib/roles';

export const inviteSchema = z
	.object({
		email: z.string().trim().toLowerCase().email('Enter an e-mail address.').max(254),
		name: z.string().trim().min(1, 'Enter the person’s name.').max(120, 'At most 120 characters.'),
		role: z.enum(ROLES, { message: 'Choose a role.' })
	})
	.strict();

export const roleChangeSchema = z.object({ userId: z.coerce.number().int().positive(), role: z.enum(ROLES, { message: 'Choose a role.' }) }).strict();
export const userIdSchema = z.object({ userId: z.coerce.number().int().positive() }).strict();

export class UserNotFound extends NotFound {
	constructor() {
		super('No such user.');
	}
}
export class LastAdmin extends Conflict {
	constructor() {
		super('last-admin', 'This is the last active administrator: make someone else an administrator first.');
	}
}

/** "invited" while no password has been set yet. */
export type UserState = 'active' | 'invited' | 'deactivated';

export async function list(db: Db) {
	const rows = await db
		.select({
			id: users.id,
			email: users.email,
			name: users.name,
			role: users.role,
			status: users.status,
			hasPassword: users.passwordHash,
			totpEnabledAt: users.totpEnabledAt,
			createdAt: users.createdAt
		})
		.from(users)
		.orderBy(asc(users.name));
	return rows.map(({ hasPassword, status, totpEnabledAt, ...u }) => ({
		...u,
		twoStep: totpEnabledAt !== null,
		state: (status === 'disabled' ? 'deactivated' : hasPassword ? 'active' : 'invited') as UserState
	}));
}

async function lockUser(tx: Tx, userId: number) {
	const [u] = await tx.select().from(users).where(eq(users.id, userId)).limit(1).for('update');
	if (!u) throw new UserNotFound();
	return u;
}

async function otherActiveAdmins(tx: Tx, userId: number) {
	const admins = await tx
		.select({ id: users.id })
		.from(users)
		.where(and(inArray(users.role, [...ADMINS]), eq(users.status, 'active')))
		.for('update');
	return admins.filter((a) => a.id !== userId).length;
}

/** Creates the account without a password and mails a one-time link to choose one. */
export async function invite(db: Db, actor: { id: number; name: string }, input: z.infer<typeof inviteSchema>) {
	const { userId, token } = await inTransaction(db, async (tx) => {
		const [existing] = await tx.select({ n: count() }).from(users).where(eq(users.email, input.email));
		if (existing.n > 0) throw new DomainError(409, 'email-taken', 'That address already has an account.', { email: 'That address already has an account.' });
		const [{ id }] = await tx.insert(users).values({ email: input.email, name: input.name, role: input.role, passwordHash: null }).$returningId();
		const token = await createLink(tx, id, 'invite');
		await recordAudit(tx, { actorId: actor.id, action: 'user.invited', targetType: 'user', targetId: id, detail: { email: input.email, role: input.role } });
		return { userId: id, token };
	});
	await notify.sendInvite({ email: input.email, name: input.name }, token, LINK_LIFETIME_MS.invite / 3600_000, actor.name);
	return userId;
}

/** Sends a fresh invitation to someone who has not set a password yet (the old link stops working). */
export async function resendInvite(db: Db, actor: { id: number; name: string }, userId: number) {
	const { user, token } = await inTransaction(db, async (tx) => {
		const user = await lockUser(tx, userId);
		if (user.passwordHash || user.status !== 'active') throw new DomainError(409, 'not-invited', 'This person has already set a password.');
		const token = await createLink(tx, user.id, 'invite');
		await recordAudit(tx, { actorId: actor.id, action: 'user.invited', targetType: 'user', targetId: user.id, detail: { resent: true } });
		return { user, token };
	});
	await notify.sendInvite(user, token, LINK_LIFETIME_MS.invite / 3600_000, actor.name);
}

export async function changeRole(db: Db, actorId: number, userId: number, role: Role) {
	const changed = await inTransaction(db, async (tx) => {
		const user = await lockUser(tx, userId);
		if (user.role === role) return null;
		if (inSet(user.role, ADMINS) && user.status === 'active' && (await otherActiveAdmins(tx, user.id)) === 0) throw new LastAdmin();
		await tx.update(users).set({ role }).where(eq(users.id, user.id));
		await recordAudit(tx, { actorId, action: 'user.role-changed', targetType: 'user', targetId: user.id, detail: { from: user.role, to: role } });
		return user;
	});
	if (changed) await notify.noticeRoleChanged(changed.email, role);
}

/** Revokes every token of a user that is not revoked yet; returns how many. */
async function revokeAllTokens(tx: Tx, userId: number, at: Date) {
	const [res] = await tx.update(apiTokens).set({ revokedAt: at }).where(and(eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)));
	return res.affectedRows;
}

/**
 * Deactivates: sessions are deleted and API tokens revoked at once, so that a later reactivation
 * revives neither (the person signs in again and makes new tokens).
 */
export async function deactivate(db: Db, actorId: number, userId: number) {
	await inTransaction(db, async (tx) => {
		const user = await lockUser(tx, userId);
		if (user.status === 'disabled') return;
		if (inSet(user.role, ADMINS) && (await otherActiveAdmins(tx, user.id)) === 0) throw new LastAdmin();
		await tx.update(users).set({ status: 'disabled' }).where(eq(users.id, user.id));
		await endAllSessionsInTx(tx, user.id);
		const tokensRevoked = await revokeAllTokens(tx, user.id, new Date());
		await recordAudit(tx, { actorId, action: 'user.deactivated', targetType: 'user', targetId: user.id, detail: { tokensRevoked } });
	});
}

/**
 * Reactivates. Tokens made before are revoked here too (a user deactivated before deactivation revoked
 * them still has some): old tokens never come back to life with the account.
 */
export async function reactivate(db: Db, actorId: number, userId: number) {
	await inTransaction(db, async (tx) => {
		const user = await lockUser(tx, userId);
		if (user.status === 'active') return;
		await tx.update(users).set({ status: 'active' }).where(eq(users.id, user.id));
		const tokensRevoked = await revokeAllTokens(tx, user.id, new Date());
		await recordAudit(tx, { actorId, action: 'user.reactivated', targetType: 'user', targetId: user.id, detail: { tokensRevoked } });
	});
}
