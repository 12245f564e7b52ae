/**
 * Sessions. lucia (v3) stays behind this one module so it can be replaced without touching routes.
 * Idle timeout 30 min (lucia renews a session when half of it has passed), absolute limit 12 h.
 */
import { Lucia, TimeSpan, type Session } from 'lucia';
import { DrizzleMySQLAdapter } from '@lucia-auth/adapter-drizzle';
import { env } from '$env/dynamic/private';
import type { Cookies } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { and, eq, ne } from 'drizzle-orm';
import { sessions, users, type Role } from '$lib/server/db/schema';

export const IDLE_TIMEOUT = new TimeSpan(30, 'm');
export const ABSOLUTE_LIFETIME_MS = 12 * 60 * 60 * 1000;

const secure = (env.ORIGIN ?? '').startsWith('https:');

const adapter = new DrizzleMySQLAdapter(db, sessions, users);

export const lucia = new Lucia(adapter, {
	sessionExpiresIn: IDLE_TIMEOUT,
	sessionCookie: {
		name: secure ? '__Host-gc_session' : 'gc_session',
		expires: false,
		attributes: { secure, sameSite: 'lax', path: '/' }
	},
	getUserAttributes: (a) => ({ email: a.email, name: a.name, role: a.role, status: a.status }),
	getSessionAttributes: (a) => ({ createdAt: a.createdAt })
});

declare module 'lucia' {
	interface Register {
		Lucia: typeof lucia;
		UserId: number;
		DatabaseUserAttributes: { email: string; name: string; role: Role; status: 'active' | 'disabled' };
		DatabaseSessionAttributes: { createdAt: Date };
	}
}

export const SESSION_COOKIE = lucia.sessionCookieName;

/** Starts a new session for a user (a fresh random id at every sign-in) and sets its cookie. */
export async function startSession(userId: number, cookies: Cookies, userAgent?: string | null) {
	const session = await lucia.createSession(userId, {
		createdAt: new Date(),
		...(userAgent ? { userAgent: userAgent.slice(0, 255) } : {})
	} as unknown as { createdAt: Date });
	const cookie = lucia.createSessionCookie(session.id);
	cookies.set(cookie.name, cookie.value, { ...cookie.attributes, path: '/' });
	return session;
}

/**
 * Validates the session cookie: returns the user and session, renewing the cookie when lucia
 * extended the session, and refusing sessions past the absolute lifetime or of disabled users.
 */
export async function resolveSession(cookies: Cookies) {
	const id = cookies.get(SESSION_COOKIE);
	if (!id) return null;
	const { session, user } = await lucia.validateSession(id);
	if (!session || !user) {
		clearCookie(cookies);
		return null;
	}
	const created = new Date(session.createdAt).getTime();
	if (user.status !== 'active' || Date.now() - created > ABSOLUTE_LIFETIME_MS) {
		await lucia.invalidateSession(session.id);
		clearCookie(cookies);
		return null;
	}
	if (session.fresh) {
		const cookie = lucia.createSessionCookie(session.id);
		cookies.set(cookie.name, cookie.value, { ...cookie.attributes, path: '/' });
	}
	return { session, user };
}

/** Ends one session on the server and clears its cookie. */
export async function endSession(session: Session, cookies: Cookies) {
	await lucia.invalidateSession(session.id);
	clearCookie(cookies);
}

/** Ends every session of a user (password reset, deactivation). */
export function endAllSessions(userId: number) {
	return lucia.invalidateUserSessions(userId);
}

/** Ends every session of a user except one (after a password change in that session). */
export async function endOtherSessions(userId: number, keepSessionId: string) {
	await db.delete(sessions).where(and(eq(sessions.userId, userId), ne(sessions.id, keepSessionId)));
}

function clearCookie(cookies: Cookies) {
	const blank = lucia.createBlankSessionCookie();
	cookies.set(blank.name, blank.value, { ...blank.attributes, path: '/' });
}
