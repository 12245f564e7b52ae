import { fail, redirect } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { checkCredentials, safeRedirect, signinSchema } from '$lib/server/accounts/signin';
import { startSession } from '$lib/server/auth/sessions';

export const load = (async ({ locals, url }) => {
	// Public page: no role needed. A signed-in user goes straight on.
	if (locals.user) redirect(303, safeRedirect(url.searchParams.get('redirectTo')));
	return { redirectTo: safeRedirect(url.searchParams.get('redirectTo')) };
}) satisfies PageServerLoad;

export const actions = {
	default: async ({ request, cookies, url }) => {
		const form = await request.formData();
		const values = { email: String(form.get('email') ?? ''), password: String(form.get('password') ?? '') };
		const parsed = signinSchema.safeParse(values);
		if (!parsed.success) {
			return fail(400, { email: values.email, message: 'Enter your e-mail address and password.' });
		}
		const user = await checkCredentials(db, parsed.data.email, parsed.data.password, env.AUTH_PEPPER);
		if (!user) {
			return fail(400, { email: values.email, message: 'That e-mail and password do not match an active account.' });
		}
		await startSession(user.id, cookies, request.headers.get('user-agent'));
		redirect(303, safeRedirect(url.searchParams.get('redirectTo')));
	}
} satisfies Actions;
