import { env } from '$env/dynamic/private';
import { z } from 'zod';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { ADMINS, ANY_ROLE, inSet, ROLE_LABELS } from '$lib/roles';
import { endOtherSessions, endSessionByHandle, listSessions } from '$lib/server/auth/sessions';
import { failFrom, formFailure } from '$lib/server/form-failure';
import * as twoStep from '$lib/server/accounts/two-step';
import * as apiTokens from '$lib/server/accounts/api-tokens';
import { changePassword, changePasswordSchema, recheckPassword, recheckRefusal } from '$lib/server/accounts/passwords';

export const load = (async (event) => {
	const user = requireRole(event, ANY_ROLE);
	return {
		me: { name: user.name, email: user.email, roleLabel: ROLE_LABELS[user.role] },
		tokens: await apiTokens.list(db, user.id),
		sessions: await listSessions(user.id, event.locals.session?.id ?? null),
		expiryChoices: apiTokens.EXPIRY_CHOICES,
		twoStep: {
			...(await twoStep.status(db, user.id)),
			setup: await twoStep.setupView(db, user, env.AUTH_PEPPER),
			isAdmin: inSet(user.role, ADMINS)
		}
	};
}) satisfies PageServerLoad;

/** A two-step form's failure: the code or password field, or a message for the whole form. */
function twoStepRefusal(result: Exclude<twoStep.CodeResult, { ok: true }>) {
	const field = result.reason === 'wrong-password' ? 'password' : 'code';
	return formFailure(result.reason === 'throttled' ? 429 : 400, { form: 'twostep' as const, errors: { [field]: twoStep.refusalText(result) } });
}

/** Runs a two-step change; a domain error (already on, no set-up started, ...) becomes the form's message. */
async function twoStepChange<T>(work: () => Promise<T>) {
	try {
		return { ok: true as const, value: await work() };
	} catch (err) {
		return { ok: false as const, failure: failFrom(err, { form: 'twostep' }) };
	}
}

const revokeSchema = z.object({ tokenId: z.coerce.number().int().positive() }).strict();
const sessionSchema = z.object({ handle: z.string().regex(/^[0-9a-f]{24}$/) }).strict();

export const actions = {
	password: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		const form = Object.fromEntries(await event.request.formData());
		const parsed = changePasswordSchema.safeParse(form);
		if (!parsed.success) return failFrom(parsed.error, { form: 'password' });
		const result = await changePassword(db, user.id, parsed.data, env.AUTH_PEPPER);
		if (!result.ok) return formFailure(result.retryAfterSeconds ? 429 : 400, { form: 'password' as const, errors: { [result.field]: result.message } });
		if (event.locals.session) await endOtherSessions(user.id, event.locals.session.id);
		return { form: 'password' as const, done: 'Password changed. Your other sessions have been signed out.' };
	},
	createToken: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		const form = Object.fromEntries(await event.request.formData());
		const values = { name: String(form.name ?? ''), expiresInDays: String(form.expiresInDays ?? '0') };
		const parsed = apiTokens.createTokenSchema.safeParse({ ...values, password: String(form.password ?? '') });
		if (!parsed.success) return failFrom(parsed.error, { form: 'token', values });
		const check = await recheckPassword(db, user.id, parsed.data.password ?? '', env.AUTH_PEPPER);
		if (!check.ok) {
			return formFailure(check.reason === 'throttled' ? 429 : 400, { form: 'token' as const, values, errors: { password: recheckRefusal(check) } });
		}
		const created = await apiTokens.create(db, user, parsed.data);
		return { form: 'token' as const, created: { name: created.name, token: created.token } };
	},
	revokeToken: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		const parsed = revokeSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return formFailure(400, { form: 'revoke' as const, message: 'Choose a token to revoke.' });
		try {
			await apiTokens.revoke(db, { id: user.id, isAdmin: false }, parsed.data.tokenId);
		} catch (err) {
			if (err instanceof apiTokens.TokenNotFound) return formFailure(404, { form: 'revoke' as const, message: 'That token does not exist or is already revoked.' });
			throw err;
		}
		return { form: 'revoke' as const, done: 'Token revoked.' };
	},
	endSession: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		const parsed = sessionSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return formFailure(400, { form: 'sessions' as const, message: 'Choose a session to sign out.' });
		if (!(await endSessionByHandle(user.id, parsed.data.handle, event.locals.session?.id ?? null))) {
			return formFailure(404, { form: 'sessions' as const, message: 'That session has already ended.' });
		}
		return { form: 'sessions' as const, done: 'That session is signed out.' };
	},
	endOtherSessions: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		if (!event.locals.session) return formFailure(400, { form: 'sessions' as const, message: 'Sign in with a browser to do this.' });
		// The button says what it does; a post without it (an empty form) changes nothing.
		if ((await event.request.formData()).get('confirm') !== 'yes') return formFailure(400, { form: 'sessions' as const, message: 'Use the button to sign out the other sessions.' });
		await endOtherSessions(user.id, event.locals.session.id);
		return { form: 'sessions' as const, done: 'Every other session is signed out.' };
	},
	startTwoStep: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		// Only the button starts it (an empty post changes nothing).
		if ((await event.request.formData()).get('confirm') !== 'yes') return formFailure(400, { form: 'twostep' as const, message: 'Use the button to start the set-up.' });
		const run = await twoStepChange(() => twoStep.startSetup(db, user.id, env.AUTH_PEPPER));
		if (!run.ok) return run.failure;
		return { form: 'twostep' as const, started: true };
	},
	cancelTwoStep: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		if ((await event.request.formData()).get('confirm') !== 'yes') return formFailure(400, { form: 'twostep' as const, message: 'Use the button to cancel the set-up.' });
		await twoStep.cancelSetup(db, user.id);
		return { form: 'twostep' as const, done: 'Set-up cancelled; two-step sign-in stays off.' };
	},
	confirmTwoStep: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		const parsed = twoStep.codeSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return failFrom(parsed.error, { form: 'twostep' });
		const run = await twoStepChange(() => twoStep.confirmSetup(db, user, event.locals.session?.id ?? null, parsed.data.code, env.AUTH_PEPPER));
		if (!run.ok) return run.failure;
		if (!run.value.ok) return twoStepRefusal(run.value);
		return { form: 'twostep' as const, done: 'Two-step sign-in is on. From now on, signing in also asks for a code from your app.' };
	},
	turnOffTwoStep: async (event) => {
		const user = requireRole(event, ANY_ROLE);
		const parsed = twoStep.turnOffSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return failFrom(parsed.error, { form: 'twostep' });
		const run = await twoStepChange(() => twoStep.turnOff(db, user, parsed.data, env.AUTH_PEPPER));
		if (!run.ok) return run.failure;
		if (!run.value.ok) return twoStepRefusal(run.value);
		return { form: 'twostep' as const, done: 'Two-step sign-in is off. Signing in asks only for your password again.' };
	}
} satisfies Actions;
