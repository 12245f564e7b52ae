import type { DbOrTx } from '$lib/server/db';
import { auditEvents } from '$lib/server/db/schema';

/**
 * Records who changed something sensitive (users, roles, tokens, imports, ...). Never put passwords,
 * tokens, cookies or Authorization headers into `detail`.
 */
export async function recordAudit(
	db: DbOrTx,
	event: { actorId: number | null; action: string; targetType?: string; targetId?: string | number; detail?: unknown }
) {
	await db.insert(auditEvents).values({
		actorId: event.actorId,
		action: event.action,
		targetType: event.targetType ?? null,
		targetId: event.targetId === undefined ? null : String(event.targetId),
		detail: event.detail ?? null
	});
}
