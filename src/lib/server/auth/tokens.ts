import { createHash, randomBytes } from 'node:crypto';
import { and, eq, isNull, or, gt, sql } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { apiTokens, users, type Role } from '$lib/server/db/schema';

/** Personal API tokens: `gc_` + 32 random bytes (base64url); only their SHA-256 is stored. */
export const TOKEN_PREFIX = 'gc_';

export function sha256Hex(value: string): string {
	return createHash('sha256').update(value).digest('hex');
}

/** A new random token and what to store of it. */
export function newToken() {
	const token = TOKEN_PREFIX + randomBytes(32).toString('base64url');
	return { token, tokenHash: sha256Hex(token), prefix: token.slice(0, 10) };
}

export interface TokenUser {
	id: number;
	email: string;
	name: string;
	role: Role;
	tokenId: number;
	/** The owner has two-step sign-in on (admin-only endpoints accept only such tokens). */
	twoStep: boolean;
}

/** Finds the active user behind a bearer token, or null (unknown, revoked, expired, or user disabled). */
export async function resolveBearer(db: DbOrTx, token: string): Promise<TokenUser | null> {
	if (!token.startsWith(TOKEN_PREFIX) || token.length > 100) return null;
	const now = new Date();
	const [row] = await db
		.select({ id: users.id, email: users.email, name: users.name, role: users.role, tokenId: apiTokens.id, totpEnabledAt: users.totpEnabledAt })
		.from(apiTokens)
		.innerJoin(users, eq(users.id, apiTokens.userId))
		.where(
			and(
				eq(apiTokens.tokenHash, sha256Hex(token)),
				isNull(apiTokens.revokedAt),
				or(isNull(apiTokens.expiresAt), gt(apiTokens.expiresAt, now)),
				eq(users.status, 'active')
			)
		)
		.limit(1);
	if (!row) return null;
	// Last-used time, at most once a minute per token to keep reads cheap.
	await db
		.update(apiTokens)
		.set({ lastUsedAt: now })
		.where(
			and(
				eq(apiTokens.id, row.tokenId),
				or(isNull(apiTokens.lastUsedAt), sql`${apiTokens.lastUsedAt} < ${new Date(now.getTime() - 60_000)}`)
			)
		);
	const { totpEnabledAt, ...rest } = row;
	return { ...rest, twoStep: totpEnabledAt !== null };
}
