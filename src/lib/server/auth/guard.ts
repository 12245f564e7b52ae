import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import type { Role } from '$lib/server/db/schema';
import type { PUBLIC } from './roles';

export type SignedInUser = NonNullable<App.Locals['user']>;

type GuardEvent = Pick<RequestEvent, 'locals' | 'url'>;

/**
 * The one role check. Call it at the top of every load, form action and `+server.ts` handler with
 * the named role set it needs (see roles.ts). Not signed in: a page is redirected to /signin, an API
 * call gets 401. Signed in with another role: 403. With `PUBLIC` it lets everyone through and
 * returns the user or null, so a public handler states its role the same way.
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
	if (!roles.includes(user.role)) {
		error(403, { code: 'forbidden', message: 'Your role may not do this.' });
	}
	return user;
}

/** True when the user holds one of the roles (for showing or hiding UI; the server still checks). */
export function hasRole(user: App.Locals['user'], roles: readonly Role[]): boolean {
	return !!user && roles.includes(user.role);
}
