import { redirect } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { PUBLIC } from '$lib/roles';
import { newPasswordPairSchema } from '$lib/server/auth/password-policy';
import { startSession } from '$lib/server/auth/sessions';
import { checkLink, LINK_REFUSALS } from '$lib/server/accounts/links';
import { PasswordRefused, setPasswordFromLink } from '$lib/server/accounts/passwords';
import { formFailure } from '$lib/server/form-failure';

/** Looking at the link spends nothing (mail scanners may open it); only the form's POST does. */
export const load = (async (event) => {
	requireRole(event, PUBLIC);
	const check = await checkLink(db, event.params.token);
	if (!check.ok) return { valid: false as const, message: LINK_REFUSALS[check.reason] };
	return { valid: true as const, purpose: check.purpose, email: check.user.email, name: check.user.name };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		requireRole(event, PUBLIC);
		const form = await event.request.formData();
		const parsed = newPasswordPairSchema.safeParse({ password: String(form.get('password') ?? ''), confirm: String(form.get('confirm') ?? '') });
		if (!parsed.success) {
			const errors: Record<string, string> = {};
			for (const i of parsed.error.issues) errors[String(i.path[0] ?? 'password')] ??= i.message;
			return formFailure(400, { errors });
		}
		let result;
		try {
			result = await setPasswordFromLink(db, event.params.token, parsed.data.password, env.AUTH_PEPPER);
		} catch (err) {
			if (err instanceof PasswordRefused) return formFailure(400, { errors: { password: err.message } });
			throw err;
		}
		if (!result.ok) return formFailure(400, { message: LINK_REFUSALS[result.reason] });
		await startSession(result.user.id, event.cookies, event.request.headers.get('user-agent'));
		redirect(303, '/');
	}
} satisfies Actions;
