import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { isHalfSignedInPath, secondFactorPageFor } from './public-paths';
import { ADMINS, inSet, isAdminOnly, type PUBLIC, type Role } from '$lib/roles';

export type SignedInUser = NonNullable<App.Locals['user']>;

type GuardEvent = Pick<RequestEvent, 'locals' | 'url' | 'request'>;

/** The error code and words of an administrator without two-step sign-in (admin/+error.svelte links to /account). */
export const SECOND_FACTOR_NEEDED = 'second-factor-not-set-up';

/**
 * The one role check. Call it at the top of every load, form action and `+server.ts` handler with
 * the named role set it needs (see roles.ts). Not signed in: a page is redirected to /signin, an API
 * call gets 401. Signed in with another role: 403. With `PUBLIC` it lets everyone through and
 * returns the user or null, so a public handler states its role the same way.
 *
 * Admin-only sets (every role in the set is 'admin', i.e. `ADMINS`) also need two-step sign-in:
 * the session must have given its code, or a token's owner must have it on (locals.secondFactor is
 * 'verified'); otherwise 403 `second-factor-not-set-up`. A half-signed-in session (code still
 * missing) is sent to /signin/code here too, as a second net behind the hooks gate.
 */
export function requireRole(event: GuardEvent, roles: typeof PUBLIC): SignedInUser | null;
export function requireRole(event: GuardEvent, roles: readonly Role[]): SignedInUser;
export function requireRole(event: GuardEvent, roles: readonly Role[] | typeof PUBLIC): SignedInUser | null {
	const user = event.locals.user;
	if (roles === 'public') return user;
	if (!user) {
		if (!event.url.pathname.startsWith('/api/')) {
			const back = event.url.pathname + event.url.search;
			redirect(303, `/signin?redirectTo=${encodeURIComponent(back)}`);
		}
		error(401, { code: 'unauthenticated', message: 'Sign in first.' });
	}
	if (event.locals.secondFactor === 'pending' && !isHalfSignedInPath(event.url.pathname, event.request.method)) {
		if (!event.url.pathname.startsWith('/api/')) redirect(303, secondFactorPageFor(event.url));
		error(401, { code: 'second-factor-required', message: 'Give your two-step sign-in code first.' });
	}
	if (!roles.includes(user.role)) {
		error(403, { code: 'forbidden', message: 'Your role may not do this.' });
	}
	if (isAdminOnly(roles) && event.locals.secondFactor !== 'verified') {
		error(403, {
			code: SECOND_FACTOR_NEEDED,
			message:
				event.locals.authVia === 'token'
					? 'Administration through the API needs a token of an administrator who has two-step sign-in turned on.'
					: 'The admin pages need two-step sign-in. Turn it on on your account page, then come back.'
		});
	}
	return user;
}

/**
 * True for an administrator whose request carries two-step sign-in ('verified'): for admin powers
 * inside routes open to every role (revoking anyone's token), the same rule as admin-only sets.
 */
export function hasAdminFactor(event: Pick<RequestEvent, 'locals'>): boolean {
	return inSet(event.locals.user?.role, ADMINS) && event.locals.secondFactor === 'verified';
}

/** True when the user holds one of the roles (for showing or hiding UI; the server still checks). */
export function hasRole(user: App.Locals['user'], roles: readonly Role[]): boolean {
	return !!user && roles.includes(user.role);
}
