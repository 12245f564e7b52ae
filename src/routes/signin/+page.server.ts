import { redirect } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { attemptSignin, INVALID_CREDENTIALS, safeRedirect, signinSchema, throttledMessage } from '$lib/server/accounts/signin';
import { startSession } from '$lib/server/auth/sessions';
import { requireRole } from '$lib/server/auth/guard';
import { PUBLIC } from '$lib/roles';
import { SECOND_FACTOR_PAGE } from '$lib/server/auth/public-paths';
import { formFailure } from '$lib/server/form-failure';

export const load = (async (event) => {
	// Public page. A signed-in user goes straight on.
	const user = requireRole(event, PUBLIC);
	if (user) redirect(303, safeRedirect(event.url.searchParams.get('redirectTo')));
	return { redirectTo: safeRedirect(event.url.searchParams.get('redirectTo')), reset: event.url.searchParams.get('reset') === 'sent' };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		requireRole(event, PUBLIC);
		const { request, cookies, url } = event;
		const form = await request.formData();
		const values = { email: String(form.get('email') ?? ''), password: String(form.get('password') ?? '') };
		const parsed = signinSchema.safeParse(values);
		if (!parsed.success) {
			return formFailure(400, { values: { email: values.email }, message: 'Enter your e-mail address and password.' });
		}
		const result = await attemptSignin(db, { ...parsed.data, clientAddress: event.getClientAddress(), pepper: env.AUTH_PEPPER });
		if (!result.ok && result.reason === 'throttled') {
			return formFailure(429, { values: { email: values.email }, message: throttledMessage(result.retryAfterSeconds) });
		}
		if (!result.ok) return formFailure(400, { values: { email: values.email }, message: INVALID_CREDENTIALS });
		await startSession(result.user.id, cookies, request.headers.get('user-agent'));
		const to = safeRedirect(url.searchParams.get('redirectTo'));
		// With two-step sign-in on, the session is only half signed in until the code is given.
		if (result.user.totpEnabledAt) redirect(303, to === '/' ? SECOND_FACTOR_PAGE : `${SECOND_FACTOR_PAGE}?redirectTo=${encodeURIComponent(to)}`);
		redirect(303, to);
	}
} satisfies Actions;
