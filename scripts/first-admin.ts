/**
 * Creates the first administrator of a fresh deployment (no demo accounts there) and prints a
 * one-time invitation link (48 h) to choose a password. Refuses when an active admin already exists.
 * Usage: DATABASE_URL=... ORIGIN=https://glasscrib.example.org npx tsx scripts/first-admin.ts --email a@b.org --name "A. Person"
 */
import { parseArgs } from 'node:util';
import { and, eq } from 'drizzle-orm';
import { z } from 'zod';
import { createDb } from '../src/lib/server/db/client';
import { users } from '../src/lib/server/db/schema';
import { createLink } from '../src/lib/server/accounts/links';
import { recordAudit } from '../src/lib/server/audit';

const { values } = parseArgs({ options: { email: { type: 'string' }, name: { type: 'string' } } });
const input = z
	.object({ email: z.string().trim().toLowerCase().email('--email must be an e-mail address'), name: z.string().trim().min(1, '--name is required').max(120) })
	.safeParse(values);
const url = process.env.DATABASE_URL;
const origin = process.env.ORIGIN;
if (!input.success || !url || !origin) {
	console.error(!input.success ? input.error.issues.map((i) => i.message).join('; ') : !url ? 'DATABASE_URL is not set' : 'ORIGIN is not set (the public URL of the app)');
	process.exit(2);
}
const { db, pool } = createDb(url, 2);
try {
	const [admin] = await db.select({ id: users.id }).from(users).where(and(eq(users.role, 'admin'), eq(users.status, 'active'))).limit(1);
	if (admin) {
		console.error('An active administrator exists already: invite people from /admin/users instead.');
		process.exitCode = 1;
	} else {
		const token = await db.transaction(async (tx) => {
			const [{ id }] = await tx.insert(users).values({ email: input.data.email, name: input.data.name, role: 'admin' }).$returningId();
			await recordAudit(tx, { actorId: null, action: 'user.first-admin', targetType: 'user', targetId: id });
			return createLink(tx, id, 'invite');
		});
		console.log(`First administrator ${input.data.email} created. Open this link once, within 48 hours, to choose a password:`);
		console.log(`${origin.replace(/\/$/, '')}/welcome/${token}`);
	}
} finally {
	await pool.end();
}
