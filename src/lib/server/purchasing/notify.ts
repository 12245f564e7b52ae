/**
 * Mail to engineers whose reservation waited for a part that has now been received.
 * Sent after the receipt committed; a failure is logged and does not undo the receipt.
 */
import type { CoveredReservation } from './requests';
import { formatDate } from '$lib/format';
import type { Mailer } from './flags';

/** One message per engineer, listing their reservations of the part that the receipt covers. */
export function coveredMessages(sku: string, received: number, covered: readonly CoveredReservation[], origin: string) {
	const byUser = new Map<string, CoveredReservation[]>();
	for (const c of covered) byUser.set(c.email, [...(byUser.get(c.email) ?? []), c]);
	return [...byUser].map(([email, list]) => ({
		to: email,
		subject: `${sku} has arrived: your reservation can be served`,
		text: [
			`Hello ${list[0].name},`,
			'',
			`${received} unit${received === 1 ? '' : 's'} of ${sku} ${received === 1 ? 'was' : 'were'} just received into stock.`,
			...list.map(
				(c) =>
					`- Your reservation of ${c.quantity} unit${c.quantity === 1 ? '' : 's'} until ${formatDate(c.until, 'UTC')} is now ${c.fully ? 'fully' : 'partly'} covered by stock on hand.`
			),
			'',
			`Your reservations: ${new URL('/', origin).toString()}`
		].join('\n')
	}));
}

/** Sends the messages of `coveredMessages`; returns how many went out. */
export async function notifyCovered(send: Mailer, sku: string, received: number, covered: readonly CoveredReservation[], origin: string): Promise<number> {
	let sent = 0;
	for (const m of coveredMessages(sku, received, covered, origin)) {
		try {
			await send(m);
			sent++;
		} catch (err) {
			console.error(`[purchasing] could not mail ${m.to} about ${sku}:`, err);
		}
	}
	return sent;
}
