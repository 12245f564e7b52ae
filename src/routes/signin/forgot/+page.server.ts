import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { PUBLIC } from '$lib/server/auth/roles';
import { requestReset, resetRequestSchema } from '$lib/server/accounts/passwords';
import { waitText } from '$lib/server/auth/throttle';

export const load = (async (event) => {
	requireRole(event, PUBLIC);
	return {};
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		requireRole(event, PUBLIC);
		const form = await event.request.formData();
		const email = String(form.get('email') ?? '');
		const parsed = resetRequestSchema.safeParse({ email });
		if (!parsed.success) return fail(400, { email, errors: { email: parsed.error.issues[0].message } });
		const result = await requestReset(db, parsed.data.email, event.getClientAddress());
		if (!result.ok) {
			return fail(429, { email, message: `Too many reset requests for this address or from this network. Try again in ${waitText(result.retryAfterSeconds)}.` });
		}
		// The same answer whether or not the address has an account.
		return { sent: true, email };
	}
} satisfies Actions;
