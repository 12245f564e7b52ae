import { fail } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { z } from 'zod';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, ROLE_LABELS } from '$lib/server/auth/roles';
import { endOtherSessions } from '$lib/server/auth/sessions';
import { zodFields } from '$lib/server/api/http';
import * as apiTokens from '$lib/server/accounts/api-tokens';
import { changePassword, changePasswordSchema, confirmPassword } from '$lib/server/accounts/passwords';

export const load = (async (event) => {
	const user = requireRole(event, ANY_ROLE);
	return {
		me: { name: user.name, email: user.email, roleLabel: ROLE_LABELS[user.role] },
		tokens: await apiTokens.list(db, user.id),
		expiryChoices: apiTokens.EXPIRY_CHOICES
	};
}) satisfies PageServerLoad;

const revokeSchema = z.object({ tokenId: z.coerce.number().int().positive() }).strict();

export const actions = {
	password: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		const form = Object.fromEntries(await event.request.formData());
		const parsed = changePasswordSchema.safeParse(form);
		if (!parsed.success) return fail(400, { form: 'password' as const, errors: zodFields(parsed.error) });
		const result = await changePassword(db, user.id, parsed.data, env.AUTH_PEPPER);
		if (!result.ok) return fail(400, { form: 'password' as const, errors: { [result.field]: result.message } as Record<string, string> });
		if (event.locals.session) await endOtherSessions(user.id, event.locals.session.id);
		return { form: 'password' as const, done: 'Password changed. Your other sessions have been signed out.' };
	},
	createToken: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		const form = Object.fromEntries(await event.request.formData());
		const values = { name: String(form.name ?? ''), expiresInDays: String(form.expiresInDays ?? '0') };
		const parsed = apiTokens.createTokenSchema.safeParse({ ...values, password: String(form.password ?? '') });
		if (!parsed.success) return fail(400, { form: 'token' as const, values, errors: zodFields(parsed.error) });
		if (!(await confirmPassword(db, user.id, parsed.data.password ?? '', env.AUTH_PEPPER))) {
			return fail(400, { form: 'token' as const, values, errors: { password: 'That is not your current password.' } as Record<string, string> });
		}
		const created = await apiTokens.create(db, user, parsed.data);
		return { form: 'token' as const, created: { name: created.name, token: created.token } };
	},
	revokeToken: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		const parsed = revokeSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { form: 'revoke' as const, message: 'Choose a token to revoke.' });
		try {
			await apiTokens.revoke(db, { id: user.id, isAdmin: false }, parsed.data.tokenId);
		} catch (err) {
			if (err instanceof apiTokens.TokenNotFound) return fail(404, { form: 'revoke' as const, message: 'That token does not exist or is already revoked.' });
			throw err;
		}
		return { form: 'revoke' as const, done: 'Token revoked.' };
	}
} satisfies Actions;
