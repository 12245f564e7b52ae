import { eq } from 'drizzle-orm';
import { z } from 'zod';
import type { DbOrTx } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import { randomBytes } from 'node:crypto';
import { hashPassword, verifyPassword } from '$lib/server/auth/password';

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

/** Only local paths may be redirected to after sign-in. */
export function safeRedirect(target: string | null | undefined): string {
	if (!target || !target.startsWith('/') || target.startsWith('//') || target.startsWith('/\\')) return '/';
	return target;
}
