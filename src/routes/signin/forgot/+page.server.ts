import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { PUBLIC } from '$lib/roles';
import { requestReset, resetRequestSchema } from '$lib/server/accounts/passwords';
import { waitText } from '$lib/server/auth/throttle';
import { formFailure } from '$lib/server/form-failure';

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
		if (!parsed.success) return formFailure(400, { values: { email }, errors: { email: parsed.error.issues[0].message } });
		const result = await requestReset(db, parsed.data.email, event.getClientAddress());
		if (!result.ok) {
			return formFailure(429, { values: { email }, message: `Too many reset requests for this address or from this network. Try again in ${waitText(result.retryAfterSeconds)}.` });
		}
		// The same answer whether or not the address has an account.
		return { sent: true, email };
	}
} satisfies Actions;
