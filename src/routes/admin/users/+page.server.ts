import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { ROLES } from '$lib/server/db/schema';
import { requireRole } from '$lib/server/auth/guard';
import { ADMINS, ROLE_LABELS } from '$lib/roles';
import { attempt, failFrom, formFailure } from '$lib/server/form-failure';
import * as accounts from '$lib/server/accounts/users';
import * as twoStep from '$lib/server/accounts/two-step';

export const load = (async (event) => {
	const me = requireRole(event, ADMINS);
	return { users: await accounts.list(db), roles: ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] })), meId: me.id };
}) satisfies PageServerLoad;

/** Runs a user change: `{ form: 'user-<id>', done }`, or the failure of that row. */
async function rowChange(userId: number, work: () => Promise<void>, done: string) {
	const key = `user-${userId}`;
	return attempt({ form: key }, async () => {
		await work();
		return { form: key, done };
	});
}

export const actions = {
	invite: async (event) => {
		const me = requireRole(event, ADMINS);
		const form = Object.fromEntries(await event.request.formData());
		const values = { email: String(form.email ?? ''), name: String(form.name ?? ''), role: String(form.role ?? '') };
		const parsed = accounts.inviteSchema.safeParse(values);
		if (!parsed.success) return failFrom(parsed.error, { form: 'invite', values });
		return attempt({ form: 'invite', values }, async () => {
			await accounts.invite(db, me, parsed.data);
			return { form: 'invite', done: `Invitation sent to ${parsed.data.email}.` };
		});
	},
	role: async (event) => {
		const me = requireRole(event, ADMINS);
		const parsed = accounts.roleChangeSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return formFailure(400, { form: 'user', message: 'Choose a user and a role.' });
		return rowChange(parsed.data.userId, () => accounts.changeRole(db, me.id, parsed.data.userId, parsed.data.role), 'Role changed.');
	},
	deactivate: async (event) => {
		const me = requireRole(event, ADMINS);
		const parsed = accounts.userIdSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return formFailure(400, { form: 'user', message: 'Choose a user.' });
		return rowChange(parsed.data.userId, () => accounts.deactivate(db, me.id, parsed.data.userId), 'Deactivated: signed out everywhere, tokens stopped.');
	},
	reactivate: async (event) => {
		const me = requireRole(event, ADMINS);
		const parsed = accounts.userIdSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return formFailure(400, { form: 'user', message: 'Choose a user.' });
		return rowChange(parsed.data.userId, () => accounts.reactivate(db, me.id, parsed.data.userId), 'Reactivated.');
	},
	resend: async (event) => {
		const me = requireRole(event, ADMINS);
		const parsed = accounts.userIdSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return formFailure(400, { form: 'user', message: 'Choose a user.' });
		return rowChange(parsed.data.userId, () => accounts.resendInvite(db, me, parsed.data.userId), 'A new invitation was sent; the old link no longer works.');
	},
	clearTwoStep: async (event) => {
		const me = requireRole(event, ADMINS);
		const parsed = accounts.userIdSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return formFailure(400, { form: 'user', message: 'Choose a user.' });
		return rowChange(
			parsed.data.userId,
			() => twoStep.clearByAdmin(db, me, parsed.data.userId),
			'Two-step sign-in removed: they sign in with the password and can set it up again. They were told by mail.'
		);
	}
} satisfies Actions;
