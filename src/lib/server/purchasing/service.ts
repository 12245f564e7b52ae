/**
 * What the routes call: the request service plus its mail side effects, wired to the app's
 * mailer and origin. Services below take their mailer as a parameter so tests can run them
 * against the throwaway stack directly.
 */
import { env } from '$env/dynamic/private';
import type { DbOrTx } from '$lib/server/db';
import { sendMail } from '$lib/server/mail';
import { patchRequest, type PatchResult, type RequestActor } from './requests';
import { notifyCovered } from './notify';

export const appOrigin = () => env.ORIGIN || 'http://127.0.0.1:4173';

/** patchRequest, then (after commit) mails the engineers whose waiting reservations the receipt covers. */
export async function patchAndNotify(db: DbOrTx, requestId: number, input: unknown, actor: RequestActor): Promise<PatchResult & { notified: number }> {
	const result = await patchRequest(db, requestId, input, actor);
	let notified = 0;
	if (result.receipt?.covered.length) {
		notified = await notifyCovered(sendMail, result.receipt.sku, result.receipt.quantity, result.receipt.covered, appOrigin());
	}
	return { ...result, notified };
}
