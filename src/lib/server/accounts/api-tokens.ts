/** Personal API tokens of a user: list, create (shown once), revoke. */
import { and, desc, eq, isNull } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '$lib/server/db';
import { apiTokens } from '$lib/server/db/schema';
import { newToken } from '$lib/server/auth/tokens';
import { NotFound } from '$lib/server/errors';
import { recordAudit } from '$lib/server/audit';
import * as notify from './notify';
import { inTransaction } from '$lib/server/db/transaction';

/** Expiry choices offered on the account page, in days (0 = never). */
export const EXPIRY_CHOICES = [30, 90, 365, 0] as const;

export const createTokenSchema = z
	.object({
		name: z.string().trim().min(1, 'Name the token (what will use it?).').max(80, 'At most 80 characters.'),
		expiresInDays: z.coerce.number().int().min(0).max(3650, 'At most 3650 days.').optional(),
		password: z.string().max(1024).optional()
	})
	.strict();

export class TokenNotFound extends NotFound {
	constructor() {
		super('No such token.');
	}
}

export async function list(db: Db, userId: number) {
	const rows = await db
		.select({
			id: apiTokens.id,
			name: apiTokens.name,
			prefix: apiTokens.prefix,
			createdAt: apiTokens.createdAt,
			lastUsedAt: apiTokens.lastUsedAt,
			expiresAt: apiTokens.expiresAt,
			revokedAt: apiTokens.revokedAt
		})
		.from(apiTokens)
		.where(eq(apiTokens.userId, userId))
		.orderBy(desc(apiTokens.id));
	const now = Date.now();
	return rows.map((r) => ({
		...r,
		state: r.revokedAt ? 'revoked' : r.expiresAt && new Date(r.expiresAt).getTime() <= now ? 'expired' : 'active'
	}));
}

/** Creates a token; the plain token is returned once and never stored. */
export async function create(db: Db, user: { id: number; email: string }, input: { name: string; expiresInDays?: number }) {
	const { token, tokenHash, prefix } = newToken();
	const days = input.expiresInDays ?? 0;
	const expiresAt = days > 0 ? new Date(Date.now() + days * 86400_000) : null;
	const id = await inTransaction(db, async (tx) => {
		const [{ id }] = await tx.insert(apiTokens).values({ userId: user.id, name: input.name, tokenHash, prefix, expiresAt }).$returningId();
		await recordAudit(tx, { actorId: user.id, action: 'token.created', targetType: 'api_token', targetId: id, detail: { name: input.name, prefix } });
		return id;
	});
	await notify.noticeTokenCreated(user.email, input.name);
	return { id, token, name: input.name, prefix, expiresAt };
}

/**
 * Revokes a token of the user (an administrator may revoke anyone's). Someone else's token answers
 * 404, as if it did not exist.
 */
export async function revoke(db: Db, actor: { id: number; isAdmin: boolean }, tokenId: number) {
	await inTransaction(db, async (tx) => {
		const [row] = await tx
			.select()
			.from(apiTokens)
			.where(actor.isAdmin ? eq(apiTokens.id, tokenId) : and(eq(apiTokens.id, tokenId), eq(apiTokens.userId, actor.id)))
			.limit(1)
			.for('update');
		if (!row || row.revokedAt) throw new TokenNotFound();
		await tx.update(apiTokens).set({ revokedAt: new Date() }).where(and(eq(apiTokens.id, tokenId), isNull(apiTokens.revokedAt)));
		await recordAudit(tx, { actorId: actor.id, action: 'token.revoked', targetType: 'api_token', targetId: tokenId, detail: { owner: row.userId } });
	});
}
