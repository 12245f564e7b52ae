import { redirect } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';
import { completeSecondFactor } from '$lib/server/auth/sessions';
import { safeRedirect } from '$lib/server/accounts/signin';
import * as twoStep from '$lib/server/accounts/two-step';
import { formFailure } from '$lib/server/form-failure';

/** The second step of signing in: the code from the authenticator app. Only a half-signed-in session has anything to do here. */
export const load = (async (event) => {
	const user = requireRole(event, ANY_ROLE);
	const redirectTo = safeRedirect(event.url.searchParams.get('redirectTo'));
	if (event.locals.secondFactor !== 'pending') redirect(303, redirectTo);
	return { email: user.email, redirectTo };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		const redirectTo = safeRedirect(event.url.searchParams.get('redirectTo'));
		const session = event.locals.session;
		if (event.locals.secondFactor !== 'pending' || !session) redirect(303, redirectTo);
		const parsed = twoStep.codeSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return formFailure(400, { message: parsed.error.issues[0]?.message ?? 'Enter the 6-digit code.' });
		let result: twoStep.CodeResult;
		try {
			result = await twoStep.verifySignin(db, user.id, parsed.data.code, env.AUTH_PEPPER);
		} catch (err) {
			// Removed by an administrator meanwhile: the session needs no code any more.
			if (err instanceof twoStep.TwoStepOff) redirect(303, redirectTo);
			throw err;
		}
		if (!result.ok) return formFailure(result.reason === 'throttled' ? 429 : 400, { message: twoStep.refusalText(result) });
		await completeSecondFactor(session, user.id, event.cookies, event.request.headers.get('user-agent'));
		redirect(303, redirectTo);
	}
} satisfies Actions;
