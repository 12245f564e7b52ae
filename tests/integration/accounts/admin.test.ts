import { afterAll, beforeEach, describe, expect, it, onTestFinished } from 'vitest';
import { and, eq, ne } from 'drizzle-orm';
import { testDb } from '../../support/env';
import { auditEvents, users } from '../../../src/lib/server/db/schema';
import { api, clearThrottle, cookieFor, cookieWithCode, DEMO_PASSWORD, lastOutboxId, postForm, twoStepAdmin, waitForMail } from './helpers';
import * as accounts from '../../../src/lib/server/accounts/users';
import type { Db } from '../../../src/lib/server/db/client';

const { db, pool } = testDb();
/** The admin pages need two-step sign-in: this file's own administrator has it (tests/support/two-step.ts). */
const adminCookie = async () => cookieWithCode(await twoStepAdmin(db, 'admin-test'));
afterAll(async () => {
	await db.update(users).set({ role: 'purchaser' }).where(eq(users.email, 'purchaser@tarnwell.example'));
	await pool.end();
});
beforeEach(() => clearThrottle(db));

const idOf = async (email: string) => (await db.select().from(users).where(eq(users.email, email)))[0].id;

describe('user administration', () => {
	it('changes a role (the new role applies at once), audits it and tells the person by mail', async () => {
		const admin = await adminCookie();
		const purchaser = await cookieFor('purchaser@tarnwell.example');
		const outboxCode = async () => ((await (await api('GET', '/api/v1/outbox', { cookie: purchaser })).json()) as { error: { code: string } }).error.code;
		expect(await outboxCode()).toBe('forbidden');
		const since = await lastOutboxId(db);
		const id = await idOf('purchaser@tarnwell.example');
		const res = await postForm('/admin/users?/role', { userId: String(id), role: 'admin' }, { cookie: admin });
		expect(res.status).toBe(200);
		// The new role applies at once: an administrator now, who has not set up two-step sign-in.
		expect(await outboxCode()).toBe('second-factor-not-set-up');
		expect((await api('GET', '/api/v1/me', { cookie: purchaser })).status).toBe(200);
		const mail = await waitForMail(db, 'purchaser@tarnwell.example', since, 'role');
		expect(mail.textBody).toContain('Administrator');
		const ev = await db.select().from(auditEvents).where(and(eq(auditEvents.action, 'user.role-changed'), eq(auditEvents.targetId, String(id))));
		expect(ev.at(-1)?.detail).toEqual({ from: 'purchaser', to: 'admin' });
		await postForm('/admin/users?/role', { userId: String(id), role: 'purchaser' }, { cookie: admin });
		expect((await api('GET', '/api/v1/outbox', { cookie: purchaser })).status).toBe(403);
	});

	it('will not demote or deactivate the last active administrator', async () => {
		// Other test files make administrators of their own at the same time, so "the last one" is set
		// up inside a transaction that is rolled back: every other administrator deactivated there.
		const me = await twoStepAdmin(db, 'admin-test');
		const rollback = new Error('rollback');
		await expect(
			db.transaction(async (tx) => {
				await tx.update(users).set({ status: 'disabled' }).where(and(eq(users.role, 'admin'), ne(users.id, me.id)));
				const asDb = tx as unknown as Db; // the services open a nested transaction (a savepoint)
				await expect(accounts.changeRole(asDb, me.id, me.id, 'engineer')).rejects.toBeInstanceOf(accounts.LastAdmin);
				await expect(accounts.deactivate(asDb, me.id, me.id)).rejects.toBeInstanceOf(accounts.LastAdmin);
				const [row] = await tx.select().from(users).where(eq(users.id, me.id));
				expect([row.role, row.status]).toEqual(['admin', 'active']);
				throw rollback;
			}, { isolationLevel: 'read committed' })
		).rejects.toBe(rollback);
	});

	it('refuses an invitation to an address that has an account, keeping the typed values', async () => {
		const admin = await adminCookie();
		const res = await postForm('/admin/users?/invite', { email: 'engineer@tarnwell.example', name: 'Dup Licate', role: 'engineer' }, { cookie: admin });
		expect(res.status).toBe(409);
		const html = await res.text();
		expect(html).toContain('already has an account');
		expect(html).toContain('Dup Licate');
		const bad = await postForm('/admin/users?/invite', { email: 'not-an-address', name: '', role: 'wizard' }, { cookie: admin });
		expect(bad.status).toBe(400);
	});

	it('changes the password with the current one, ends the other sessions and sends a notice', async () => {
		const email = 'stockroom@tarnwell.example';
		// Should an expectation below fail, the demo password must still come back, or every later
		// sign-in as stockroom (in other files too) fails for a reason that has nothing to do with it.
		const [stored] = await db.select({ hash: users.passwordHash }).from(users).where(eq(users.email, email));
		onTestFinished(async () => {
			await db.update(users).set({ passwordHash: stored.hash }).where(eq(users.email, email));
		});
		const a = await cookieFor(email);
		const b = await cookieFor(email);
		const wrong = await postForm('/account?/password', { current: 'not-my-password', password: 'a long new password here', confirm: 'a long new password here' }, { cookie: a });
		expect(wrong.status).toBe(400);
		const short = await postForm('/account?/password', { current: DEMO_PASSWORD(), password: 'short', confirm: 'short' }, { cookie: a });
		expect(short.status).toBe(400);
		const since = await lastOutboxId(db);
		const ok = await postForm('/account?/password', { current: DEMO_PASSWORD(), password: 'a long new password here', confirm: 'a long new password here' }, { cookie: a });
		expect(ok.status).toBe(200);
		expect((await api('GET', '/api/v1/me', { cookie: a })).status).toBe(200);
		expect((await api('GET', '/api/v1/me', { cookie: b })).status).toBe(401);
		await waitForMail(db, email, since, 'password was changed');
		// put the demo password back for the other tests
		const back = await postForm('/account?/password', { current: 'a long new password here', password: DEMO_PASSWORD(), confirm: DEMO_PASSWORD() }, { cookie: a });
		expect(back.status).toBe(200);
	});
});
