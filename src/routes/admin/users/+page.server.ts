import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { ROLES } from '$lib/server/db/schema';
import { requireRole } from '$lib/server/auth/guard';
import { ADMINS, ROLE_LABELS } from '$lib/server/auth/roles';
import { DomainError, zodFields } from '$lib/server/api/http';
import * as accounts from '$lib/server/accounts/users';
import * as twoStep from '$lib/server/accounts/two-step';

export const load = (async (event) => {
	const me = requireRole(event, ADMINS);
	return { users: await accounts.list(db), roles: ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] })), meId: me.id };
}) satisfies PageServerLoad;

/** Runs a user change and turns a domain error into a form failure of that row. */
async function rowChange(userId: number, work: () => Promise<void>, done: string) {
	try {
		await work();
		return { row: userId, done };
	} catch (err) {
		if (err instanceof DomainError) return fail(err.status, { row: userId, message: err.message });
		throw err;
	}
}

export const actions = {
	invite: async (event) => {
		const me = requireRole(event, ADMINS);
		const form = Object.fromEntries(await event.request.formData());
		const values = { email: String(form.email ?? ''), name: String(form.name ?? ''), role: String(form.role ?? '') };
		const parsed = accounts.inviteSchema.safeParse(values);
		if (!parsed.success) return fail(400, { invite: true, values, errors: zodFields(parsed.error) });
		try {
			await accounts.invite(db, me, parsed.data);
		} catch (err) {
			if (err instanceof DomainError) return fail(err.status, { invite: true, values, errors: err.fields ?? { email: err.message } });
			throw err;
		}
		return { invite: true, done: `Invitation sent to ${parsed.data.email}.` };
	},
	role: async (event) => {
		const me = requireRole(event, ADMINS);
		const parsed = accounts.roleChangeSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { row: null, message: 'Choose a user and a role.' });
		return rowChange(parsed.data.userId, () => accounts.changeRole(db, me.id, parsed.data.userId, parsed.data.role), 'Role changed.');
	},
	deactivate: async (event) => {
		const me = requireRole(event, ADMINS);
		const parsed = accounts.userIdSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { row: null, message: 'Choose a user.' });
		return rowChange(parsed.data.userId, () => accounts.deactivate(db, me.id, parsed.data.userId), 'Deactivated: signed out everywhere, tokens stopped.');
	},
	reactivate: async (event) => {
		const me = requireRole(event, ADMINS);
		const parsed = accounts.userIdSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { row: null, message: 'Choose a user.' });
		return rowChange(parsed.data.userId, () => accounts.reactivate(db, me.id, parsed.data.userId), 'Reactivated.');
	},
	resend: async (event) => {
		const me = requireRole(event, ADMINS);
		const parsed = accounts.userIdSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { row: null, message: 'Choose a user.' });
		return rowChange(parsed.data.userId, () => accounts.resendInvite(db, me, parsed.data.userId), 'A new invitation was sent; the old link no longer works.');
	},
	clearTwoStep: async (event) => {
		const me = requireRole(event, ADMINS);
		const parsed = accounts.userIdSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { row: null, message: 'Choose a user.' });
		return rowChange(
			parsed.data.userId,
			() => twoStep.clearByAdmin(db, me, parsed.data.userId),
			'Two-step sign-in removed: they sign in with the password and can set it up again. They were told by mail.'
		);
	}
} satisfies Actions;
