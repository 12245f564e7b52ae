/**
 * When the digest check (flags.ts) and the saved-setup check (setup-ready.ts) run:
 * - after every successful write request (POST, PUT, PATCH, DELETE with a status below 400,
 *   API or form action): a stock operation, a reservation, a part edit or a receipt may change
 *   what is flagged. Checks are coalesced: requests within DEBOUNCE_MS share one check, and a
 *   check never overlaps another on this instance;
 * - every PERIOD_MS on a timer, for what changes without a request (reservations expire, which
 *   may let a part recover; a write on another instance whose check failed).
 * Several instances may check at once: the unique open-notice index in MariaDB decides which
 * one reports a part, so a part is never mailed twice (flags.ts).
 */
import type { Handle } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { building } from '$app/environment';
import { db } from '$lib/server/db';
import { sendMail } from '$lib/server/mail';
import { checkFlags } from './flags';
import { checkSetupsReady } from './setup-ready';

export const DEBOUNCE_MS = 300;
export const PERIOD_MS = 5 * 60_000;

let pending: ReturnType<typeof setTimeout> | null = null;
let running: Promise<void> | null = null;
let again = false;
let timer: ReturnType<typeof setInterval> | null = null;

function origin() {
	return env.ORIGIN || `http://127.0.0.1:${env.PORT || 3000}`;
}

async function runCheck(): Promise<void> {
	if (running) {
		again = true;
		return running;
	}
	running = (async () => {
		do {
			again = false;
			try {
				await checkFlags(db, { send: sendMail, origin: origin() });
			} catch (err) {
				console.error('[purchasing] flag check failed (it runs again on the next change or timer):', err);
			}
			try {
				await checkSetupsReady(db, { send: sendMail, origin: origin() });
			} catch (err) {
				console.error('[purchasing] saved-setup check failed (it runs again on the next change or timer):', err);
			}
		} while (again);
	})().finally(() => (running = null));
	return running;
}

/** Asks for a check soon (coalesced). */
export function scheduleFlagCheck(): void {
	if (building) return;
	if (!timer) {
		timer = setInterval(() => void runCheck(), PERIOD_MS);
		timer.unref?.();
	}
	if (pending) return;
	pending = setTimeout(() => {
		pending = null;
		void runCheck();
	}, DEBOUNCE_MS);
	pending.unref?.();
}

const WRITES = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

/** The hook: schedules a check after each successful write. */
export const watchFlags: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (WRITES.has(event.request.method) && response.status < 400 && event.locals.user) scheduleFlagCheck();
	return response;
};
