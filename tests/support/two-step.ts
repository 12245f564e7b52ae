/**
 * Throwaway administrators with two-step sign-in on, for tests that use the admin pages. The demo
 * admin (admin@tarnwell.example) keeps two-step sign-in off, as the demo shows its set-up; every
 * test file shares one database and runs at the same time as the others, so each file makes its own
 * administrator (its own `tag`) instead of changing a shared account.
 */
import { createHash } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Db } from '../../src/lib/server/db/client';
import { users } from '../../src/lib/server/db/schema';
import { hashPassword } from '../../src/lib/server/auth/password';
import { codeAt, encryptSecret } from '../../src/lib/server/auth/totp';

export interface TwoStepUser {
	id: number;
	email: string;
	password: string;
	/** The TOTP secret (20 bytes), known to the test. */
	secret: Uint8Array;
	/**
	 * A code that the app accepts now. A code works once per 30-second step, so this first forgets the
	 * last step this throwaway user spent (only its own row): a file may sign in several times a step.
	 */
	freshCode: () => Promise<string>;
}

const made = new Map<string, Promise<TwoStepUser>>();

/** The administrator of a tag, created (or put back to: active, admin, two-step on, known secret and password) on first use. */
export function twoStepAdmin(db: Db, tag: string): Promise<TwoStepUser> {
	let user = made.get(tag);
	if (!user) {
		user = make(db, tag);
		made.set(tag, user);
	}
	return user;
}

async function make(db: Db, tag: string): Promise<TwoStepUser> {
	if (!/^[a-z0-9-]{1,40}$/.test(tag)) throw new Error(`tag "${tag}": use a-z, 0-9 and -`);
	const email = `two-step-${tag}@tarnwell.example`;
	const password = `two-step bench key ${tag}`;
	const secret = new Uint8Array(createHash('sha256').update(`glasscrib test secret ${tag}`).digest().subarray(0, 20));
	const passwordHash = await hashPassword(password, process.env.AUTH_PEPPER);
	await db
		.insert(users)
		.values({ email, name: `Test admin ${tag}`, role: 'admin', passwordHash })
		.onDuplicateKeyUpdate({ set: { role: 'admin', status: 'active', passwordHash } });
	const [{ id }] = await db.select({ id: users.id }).from(users).where(eq(users.email, email));
	await db
		.update(users)
		.set({ totpSecret: encryptSecret(secret, id, process.env.AUTH_PEPPER), totpEnabledAt: new Date(), totpLastStep: null, totpPendingSecret: null })
		.where(eq(users.id, id));
	return {
		id,
		email,
		password,
		secret,
		freshCode: async () => {
			await db.update(users).set({ totpLastStep: null }).where(eq(users.id, id));
			return codeAt(secret, Date.now());
		}
	};
}
