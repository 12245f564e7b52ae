/**
 * Sessions. lucia (v3) stays behind this one module so it can be replaced without touching routes.
 * Idle timeout 30 min (lucia renews a session when half of it has passed), absolute limit 12 h.
 *
 * The cookie holds a random id (25 bytes); the database holds only its SHA-256 (`sessions.id`), which
 * is what lucia sees as the session id. Someone who reads the table cannot sign in with what it holds.
 * The cookie's Max-Age ends with the session's absolute end (12 h after sign-in), never later.
 *
 * This is the only module that writes the `sessions` table. Services that end or mark sessions
 * inside their own transaction (deactivation, a password set from a link, two-step changes) call
 * the `…InTx` functions below. The app's database is opened on first use, so services importing
 * this module stay importable without a database (unit tests, the API description).
 */
import { generateIdFromEntropySize, Lucia, TimeSpan, type Session } from 'lucia';
import { DrizzleMySQLAdapter } from '@lucia-auth/adapter-drizzle';
import { env } from '$env/dynamic/private';
import type { Cookies } from '@sveltejs/kit';
import type { Db, Tx } from '$lib/server/db';
import { createHash } from 'node:crypto';
import { and, desc, eq, gt, ne } from 'drizzle-orm';
import { sessions, users, type Role } from '$lib/server/db/schema';

export const IDLE_TIMEOUT = new TimeSpan(30, 'm');
export const ABSOLUTE_LIFETIME_MS = 12 * 60 * 60 * 1000;

const secure = (env.ORIGIN ?? '').startsWith('https:');

const createLucia = (db: Db) =>
	new Lucia(new DrizzleMySQLAdapter(db, sessions, users), {
		sessionExpiresIn: IDLE_TIMEOUT,
		sessionCookie: {
			name: secure ? '__Host-gc_session' : 'gc_session',
			expires: false,
			attributes: { secure, sameSite: 'lax', path: '/' }
		},
		getUserAttributes: (a) => ({ email: a.email, name: a.name, role: a.role, status: a.status, twoStep: a.totpEnabledAt !== null }),
		getSessionAttributes: (a) => ({ createdAt: a.createdAt, secondFactorAt: a.secondFactorAt ?? null })
	});

let opened: { db: Db; lucia: ReturnType<typeof createLucia> } | undefined;

/** The app's database and lucia on it, made on first use. */
async function app() {
	if (!opened) {
		const { db } = await import('$lib/server/db');
		opened = { db, lucia: createLucia(db) };
	}
	return opened;
}

declare module 'lucia' {
	interface Register {
		Lucia: ReturnType<typeof createLucia>;
		UserId: number;
		DatabaseUserAttributes: { email: string; name: string; role: Role; status: 'active' | 'disabled'; totpEnabledAt: Date | null };
		DatabaseSessionAttributes: { createdAt: Date; secondFactorAt: Date | null };
	}
}

export const SESSION_COOKIE = secure ? '__Host-gc_session' : 'gc_session';

/** What the database stores of a cookie's session id (and lucia's id of the session). */
export const hashSessionId = (cookieId: string) => createHash('sha256').update(cookieId).digest('hex');

/** Seconds from now until the session's absolute end (at least 0). */
export const secondsToAbsoluteEnd = (createdAt: Date, now = Date.now()) =>
	Math.max(0, Math.floor((createdAt.getTime() + ABSOLUTE_LIFETIME_MS - now) / 1000));

/** Sets the cookie with the plain id, living until the session's absolute end. */
async function setSessionCookie(cookies: Cookies, cookieId: string, createdAt: Date) {
	const cookie = (await app()).lucia.createSessionCookie(cookieId);
	cookies.set(cookie.name, cookie.value, { ...cookie.attributes, path: '/', expires: undefined, maxAge: secondsToAbsoluteEnd(createdAt) });
}

/**
 * Starts a new session for a user (a fresh random id at every sign-in) and sets its cookie. A session
 * of a user with two-step sign-in starts without `secondFactorAt`; the hooks gate then lets it reach
 * only /signin/code until the code is given (completeSecondFactor).
 */
export async function startSession(userId: number, cookies: Cookies, userAgent?: string | null, secondFactorAt: Date | null = null) {
	const cookieId = generateIdFromEntropySize(25);
	const createdAt = new Date();
	const { lucia } = await app();
	const session = await lucia.createSession(
		userId,
		{
			createdAt,
			secondFactorAt,
			...(userAgent ? { userAgent: userAgent.slice(0, 255) } : {})
		} as unknown as { createdAt: Date; secondFactorAt: Date | null },
		{ sessionId: hashSessionId(cookieId) }
	);
	await setSessionCookie(cookies, cookieId, createdAt);
	return session;
}

/**
 * Validates the session cookie: returns the user and session, renewing the cookie when lucia
 * extended the session, and refusing sessions past the absolute lifetime or of disabled users.
 */
export async function resolveSession(cookies: Cookies) {
	const cookieId = cookies.get(SESSION_COOKIE);
	if (!cookieId) return null;
	const { lucia } = await app();
	const { session, user } = await lucia.validateSession(hashSessionId(cookieId));
	if (!session || !user) {
		await clearCookie(cookies);
		return null;
	}
	const created = new Date(session.createdAt).getTime();
	if (user.status !== 'active' || Date.now() - created > ABSOLUTE_LIFETIME_MS) {
		await lucia.invalidateSession(session.id);
		await clearCookie(cookies);
		return null;
	}
	if (session.fresh) await setSessionCookie(cookies, cookieId, new Date(session.createdAt));
	return { session, user };
}

/**
 * After the two-step code was accepted at sign-in: replaces the half-signed-in session by a new one
 * (new id, so a cookie seen before the code was given is worth nothing) marked with the second factor.
 */
export async function completeSecondFactor(session: Session, userId: number, cookies: Cookies, userAgent?: string | null) {
	const next = await startSession(userId, cookies, userAgent, new Date());
	await (await app()).lucia.invalidateSession(session.id);
	return next;
}

/** Ends one session on the server and clears its cookie. */
export async function endSession(session: Session, cookies: Cookies) {
	await (await app()).lucia.invalidateSession(session.id);
	await clearCookie(cookies);
}

/** Ends every session of a user except one (after a password change in that session). */
export async function endOtherSessions(userId: number, keepSessionId: string) {
	const { db } = await app();
	await db.delete(sessions).where(and(eq(sessions.userId, userId), ne(sessions.id, keepSessionId)));
}

/** A session as its owner sees it on /account: never its id (the id is the cookie's secret), only a handle derived from it. */
export interface SessionSummary {
	handle: string;
	createdAt: Date;
	/** When it ends unless it is used again (it is renewed when used after half of the idle time). */
	idleUntil: Date;
	/** When it ends at the latest (absolute lifetime). */
	endsBy: Date;
	browser: string;
	current: boolean;
}

/**
 * A stable, non-secret name for a session: the first 24 hex digits of the SHA-256 of the cookie's id,
 * that is, the start of the stored id (which is that hash; it signs nobody in).
 */
export const sessionHandle = (storedId: string) => storedId.slice(0, 24);

/** The user's live sessions, newest first. */
export async function listSessions(userId: number, currentId: string | null): Promise<SessionSummary[]> {
	const { db } = await app();
	const rows = await db.select().from(sessions).where(and(eq(sessions.userId, userId), gt(sessions.expiresAt, new Date()))).orderBy(desc(sessions.createdAt));
	return rows
		.filter((r) => Date.now() - r.createdAt.getTime() <= ABSOLUTE_LIFETIME_MS)
		.map((r) => ({
			handle: sessionHandle(r.id),
			createdAt: r.createdAt,
			idleUntil: r.expiresAt,
			endsBy: new Date(r.createdAt.getTime() + ABSOLUTE_LIFETIME_MS),
			browser: describeUserAgent(r.userAgent),
			current: r.id === currentId
		}));
}

/**
 * Ends one of the user's own sessions by its handle; never the current one (that is "Sign out").
 * Returns false when there is no such session of this user.
 */
export async function endSessionByHandle(userId: number, handle: string, currentId: string | null): Promise<boolean> {
	const { db } = await app();
	const rows = await db.select({ id: sessions.id }).from(sessions).where(eq(sessions.userId, userId));
	const target = rows.find((r) => r.id !== currentId && sessionHandle(r.id) === handle);
	if (!target) return false;
	await db.delete(sessions).where(and(eq(sessions.id, target.id), eq(sessions.userId, userId)));
	return true;
}

/** A short description of a browser from its User-Agent header ("Firefox on Linux"), for people to recognise a session. */
export function describeUserAgent(ua: string | null | undefined): string {
	if (!ua) return 'Unknown browser or script';
	const browser = /Edg\//.test(ua)
		? 'Edge'
		: /OPR\//.test(ua)
			? 'Opera'
			: /Firefox\//.test(ua)
				? 'Firefox'
				: /Chrom(e|ium)\//.test(ua)
					? 'Chromium-based browser'
					: /Safari\//.test(ua)
						? 'Safari'
						: /^(curl|Wget|python-requests|node|undici)/i.test(ua)
							? 'Script'
							: 'Other browser';
	const os = /Android/.test(ua)
		? 'Android'
		: /iPhone|iPad|iOS/.test(ua)
			? 'iOS'
			: /Windows/.test(ua)
				? 'Windows'
				: /Mac OS X|Macintosh/.test(ua)
					? 'macOS'
					: /Linux|X11/.test(ua)
						? 'Linux'
						: null;
	return os ? `${browser} on ${os}` : browser;
}

async function clearCookie(cookies: Cookies) {
	const blank = (await app()).lucia.createBlankSessionCookie();
	cookies.set(blank.name, blank.value, { ...blank.attributes, path: '/' });
}

/** Ends every session of a user, inside the caller's transaction (deactivation, a password set from a link). */
export async function endAllSessionsInTx(tx: Tx, userId: number) {
	await tx.delete(sessions).where(eq(sessions.userId, userId));
}

/** Marks one session as having passed the second factor, inside the caller's transaction (two-step set up in it). */
export async function markSecondFactorInTx(tx: Tx, sessionId: string, at: Date) {
	await tx.update(sessions).set({ secondFactorAt: at }).where(eq(sessions.id, sessionId));
}

/** Clears the second-factor mark of every session of a user, inside the caller's transaction (two-step turned off). */
export async function clearSecondFactorInTx(tx: Tx, userId: number) {
	await tx.update(sessions).set({ secondFactorAt: null }).where(eq(sessions.userId, userId));
}
