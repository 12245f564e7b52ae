/**
 * "Your saved setup can be built now": a saved setup that was short of parts and is buildable
 * again (a receipt, a return, a cancelled reservation of someone else, an expiry) mails its owner
 * once. Runs with the reorder digest (watch.ts: after write requests and on a timer).
 *
 * State lives in `setup_waits`: a check opens a wait for every setup it finds short (no mail),
 * and closes the open wait of a setup it finds buildable, mailing the owner. Closing is a
 * conditional UPDATE (open_setup_id still set), so of several checks at once, on one instance or
 * several, exactly one closes it and mails. The mail goes out after the commit (on a Galera cluster
 * two checks on different nodes both see the wait open until one commits; the other then fails
 * certification and never reaches the mail), and a refused mail reopens the wait for the next check.
 * A setup that has had parts issued to it (a fulfilled reservation) counts as built: its wait is
 * closed without a mail, and no new wait opens for it.
 */
import { and, eq, inArray, isNotNull, isNull } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { inTransaction } from '$lib/server/db/transaction';
import { reservations, setups, setupWaits, users } from '$lib/server/db/schema';
import { waitingSetups } from './board';
import type { Mailer } from './flags';

export interface SetupReadyResult {
	/** Setups whose wait opened in this check. */
	opened: number[];
	/** Setups found buildable again, whose owners this check mailed. */
	ready: number[];
}

/** The message to a setup's owner. */
export function readyMessage(setup: { id: number; name: string }, owner: { name: string; email: string }, origin: string) {
	return {
		to: owner.email,
		subject: `Your setup “${setup.name}” can be built from stock now`,
		text: [
			`Hello ${owner.name},`,
			'',
			`Every part of your saved setup “${setup.name}” is available in stock again.`,
			'Reserve its parts before someone else takes them:',
			new URL(`/build/${setup.id}`, origin).toString(),
			'',
			'When you build it: follow your lab’s laser safety rules and its laser safety officer; a focused beam can burn and blind.'
		].join('\n')
	};
}

/** One check (see the module comment). */
export async function checkSetupsReady(db: DbOrTx, opts: { send: Mailer; origin: string }): Promise<SetupReadyResult> {
	const mails: { waitId: number; setupId: number; message: ReturnType<typeof readyMessage> }[] = [];
	const result = await inTransaction(db, async (tx) => {
		mails.length = 0; // a retried transaction starts over
		const short = new Set((await waitingSetups(tx)).map((w) => w.setupId));
		const open = await tx.select({ id: setupWaits.id, setupId: setupWaits.setupId }).from(setupWaits).where(isNotNull(setupWaits.openSetupId));
		const candidates = [...new Set([...short, ...open.map((o) => o.setupId)])];
		const built = new Set(
			candidates.length
				? (
						await tx
							.selectDistinct({ setupId: reservations.setupId })
							.from(reservations)
							.where(and(inArray(reservations.setupId, candidates), eq(reservations.status, 'fulfilled')))
					).map((r) => r.setupId)
				: []
		);
		const now = new Date();
		const result: SetupReadyResult = { opened: [], ready: [] };
		const openIds = new Set(open.map((o) => o.setupId));

		for (const setupId of short) {
			if (openIds.has(setupId) || built.has(setupId)) continue;
			const [res] = await tx.insert(setupWaits).ignore().values({ setupId, openSetupId: setupId, since: now });
			if (res.affectedRows === 1) result.opened.push(setupId);
		}

		const ending = open.filter((o) => !short.has(o.setupId) || built.has(o.setupId));
		if (!ending.length) return result;
		const info = await tx
			.select({ id: setups.id, name: setups.name, ownerName: users.name, email: users.email, status: users.status })
			.from(setups)
			.innerJoin(users, eq(users.id, setups.userId))
			.where(
				inArray(
					setups.id,
					ending.map((o) => o.setupId)
				)
			);
		const byId = new Map(info.map((i) => [i.id, i]));
		for (const o of ending) {
			const outcome = built.has(o.setupId) ? 'built' : 'buildable';
			const [res] = await tx
				.update(setupWaits)
				.set({ openSetupId: null, endedAt: now, outcome })
				.where(and(eq(setupWaits.id, o.id), isNotNull(setupWaits.openSetupId)));
			if ((res as unknown as { affectedRows: number }).affectedRows !== 1) continue; // another check closed it
			const s = byId.get(o.setupId);
			if (outcome === 'built' || !s || s.status !== 'active') continue;
			mails.push({ waitId: o.id, setupId: o.setupId, message: readyMessage(s, { name: s.ownerName, email: s.email }, opts.origin) });
		}
		return result;
	});

	// After the commit: only the check that closed a wait mails its owner (see the module comment).
	let refused: unknown = null;
	for (const m of mails) {
		try {
			await opts.send(m.message);
			result.ready.push(m.setupId);
		} catch (err) {
			refused ??= err;
			// Not sent: reopen the wait, so the next check mails it (unless a newer wait opened meanwhile).
			await db
				.update(setupWaits)
				.set({ openSetupId: m.setupId, endedAt: null, outcome: null })
				.where(and(eq(setupWaits.id, m.waitId), isNull(setupWaits.openSetupId)))
				.catch(() => {});
		}
	}
	if (refused) throw refused;
	return result;
}
