/**
 * One-time links for invitations and password resets: 32 random bytes, only their SHA-256 is stored.
 * A link works once, until it expires, and only while it is the user's newest link. Looking at a
 * link (GET) spends nothing; only the set-password POST does.
 */
import { randomBytes } from 'node:crypto';
import { and, desc, eq } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { authLinks, users } from '$lib/server/db/schema';
import { sha256Hex } from '$lib/server/auth/tokens';

export type LinkPurpose = 'invite' | 'reset';

/** Invitations: 48 hours (the figure). Resets: 1 hour (shorter, as a reset is asked for on the spot). */
export const LINK_LIFETIME_MS: Record<LinkPurpose, number> = { invite: 48 * 3600_000, reset: 3600_000 };

/** Makes a new link for the user; older links of the user stop working because this one is newer. */
export async function createLink(db: DbOrTx, userId: number, purpose: LinkPurpose, now = new Date()) {
	const token = randomBytes(32).toString('base64url');
	await db.insert(authLinks).values({
		userId,
		purpose,
		tokenHash: sha256Hex(token),
		createdAt: now,
		expiresAt: new Date(now.getTime() + LINK_LIFETIME_MS[purpose])
	});
	return token;
}

export type LinkCheck =
	| { ok: true; linkId: number; purpose: LinkPurpose; user: { id: number; email: string; name: string } }
	| { ok: false; reason: 'unknown' | 'used' | 'expired' | 'superseded' | 'disabled' };

/**
 * Checks a link without spending it. With `forUpdate` (inside a transaction) the rows are locked so
 * that two submissions cannot both spend the same link.
 */
export async function checkLink(db: DbOrTx, token: string, opts: { forUpdate?: boolean; now?: Date } = {}): Promise<LinkCheck> {
	if (!/^[A-Za-z0-9_-]{20,100}$/.test(token)) return { ok: false, reason: 'unknown' };
	const now = opts.now ?? new Date();
	const q = db.select().from(authLinks).where(eq(authLinks.tokenHash, sha256Hex(token))).limit(1);
	const [link] = opts.forUpdate ? await q.for('update') : await q;
	if (!link) return { ok: false, reason: 'unknown' };
	if (link.usedAt) return { ok: false, reason: 'used' };
	if (new Date(link.expiresAt).getTime() <= now.getTime()) return { ok: false, reason: 'expired' };
	const [newest] = await db
		.select({ id: authLinks.id })
		.from(authLinks)
		.where(eq(authLinks.userId, link.userId))
		.orderBy(desc(authLinks.id))
		.limit(1);
	if (newest && newest.id !== link.id) return { ok: false, reason: 'superseded' };
	const [user] = await db
		.select({ id: users.id, email: users.email, name: users.name, status: users.status })
		.from(users)
		.where(eq(users.id, link.userId))
		.limit(1);
	if (!user || user.status !== 'active') return { ok: false, reason: 'disabled' };
	return { ok: true, linkId: link.id, purpose: link.purpose, user: { id: user.id, email: user.email, name: user.name } };
}

/** Marks a link as used (inside the transaction that sets the password). */
export async function spendLink(db: DbOrTx, linkId: number, now = new Date()) {
	await db.update(authLinks).set({ usedAt: now }).where(and(eq(authLinks.id, linkId)));
}

export const LINK_REFUSALS: Record<Exclude<LinkCheck, { ok: true }>['reason'], string> = {
	unknown: 'This link is not valid. Check that you copied the whole address from the message.',
	used: 'This link has already been used. Ask for a new one if you still need to set a password.',
	expired: 'This link has expired. Ask for a new one.',
	superseded: 'A newer link was sent since; use the link in the newest message.',
	disabled: 'This account is deactivated. Ask the lab administrator.'
};
