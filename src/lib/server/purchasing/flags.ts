/**
 * Flagged parts and the purchasers' digest.
 *
 * `flaggedParts` applies rules.ts to every catalogue part with the stock figures of
 * availability.ts (one definition of available for the whole product).
 *
 * `checkFlags` compares the flagged set with the open flag notices and
 *   - opens a notice for each newly flagged part and mails every active purchaser ONE digest
 *     listing those parts (nothing is mailed when no part is new);
 *   - clears the notices of parts that recovered, so that a later flag is reported again.
 * De-duplication holds across app instances: a notice is opened with `INSERT IGNORE` on the
 * unique `open_part_id` index, so of two instances checking at once only one opens (and mails)
 * a given part. On one server the second blocks on the index until the first commits, then skips
 * the part; on a Galera cluster the two may run on different nodes, where neither sees the other's
 * row until commit, and the second fails certification at commit (deadlock error, retried by
 * `inTransaction`). So the notices are committed first and the digest is mailed after the commit, by
 * the one check that opened them: if the mail server cannot take it now (connection, time-out, a 4xx
 * answer), the notices it opened are removed again and the next check tries again (a part is reported
 * at least once, never twice while its flag stands, except when the process dies between the commit
 * and the send: then it is not reported). A permanent refusal (a 5xx answer, e.g. 552 "message too
 * large") is logged and the notices stand: the same message would be refused at every check, for ever.
 * The digest never grows past DIGEST_MAX_BYTES: past that it lists the first parts and says how
 * many more there are on the reorder board (whose link it always carries).
 */
import { and, eq, gt, inArray, isNotNull, isNull, or } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { inTransaction } from '$lib/server/db/transaction';
import { flagNotices, parts, reservations, suppliers, users } from '$lib/server/db/schema';
import { totalsFor } from '$lib/server/stock/availability';
import { availableOf, flagReason, type FlagReason } from './rules';
import { DIGEST_RECIPIENTS } from '$lib/roles';
import { activeReservation } from '$lib/server/stock/active-reservation';

export interface FlaggedPart {
	partId: number;
	sku: string;
	name: string;
	onHand: number;
	reserved: number;
	available: number;
	reorderPoint: number;
	reorderQuantity: number;
	supplier: string | null;
	leadTimeDays: number | null;
	reason: FlagReason;
}

/**
 * Every part that is flagged now (see rules.ts), ordered by SKU. The rule is applied to the parts
 * that can be flagged at all (a reorder point above 0, or active reservations), not to the whole
 * catalogue: most parts of a large catalogue have neither.
 */
export async function flaggedParts(db: DbOrTx): Promise<FlaggedPart[]> {
	const rows = await db
		.select({
			id: parts.id,
			sku: parts.sku,
			name: parts.name,
			reorderPoint: parts.reorderPoint,
			reorderQuantity: parts.reorderQuantity,
			leadTimeDays: parts.leadTimeDays,
			supplier: suppliers.name
		})
		.from(parts)
		.leftJoin(suppliers, eq(suppliers.id, parts.supplierId))
		.where(
			and(
				isNull(parts.archivedAt),
				// Only these can be flagged (rules.ts): a reorder point, or reservations that may exceed what is on hand.
				or(
					gt(parts.reorderPoint, 0),
					inArray(
						parts.id,
						db
							.select({ id: reservations.partId })
							.from(reservations)
							.where(activeReservation)
					)
				)
			)
		)
		.orderBy(parts.sku);
	const totals = await totalsFor(
		db,
		rows.map((r) => r.id)
	);
	const out: FlaggedPart[] = [];
	for (const r of rows) {
		const t = totals.get(r.id)!;
		const reason = flagReason({ onHand: t.onHand, reserved: t.reserved, reorderPoint: r.reorderPoint });
		if (!reason) continue;
		out.push({
			partId: r.id,
			sku: r.sku,
			name: r.name,
			onHand: t.onHand,
			reserved: t.reserved,
			available: availableOf(t),
			reorderPoint: r.reorderPoint,
			reorderQuantity: r.reorderQuantity,
			supplier: r.supplier,
			leadTimeDays: r.leadTimeDays,
			reason
		});
	}
	return out;
}

export type Mailer = (message: { to: string | string[]; subject: string; text: string }) => Promise<void>;

/**
 * Largest digest text, bytes (UTF-8). Below common mail size limits (some servers take no more than
 * 64 KB), and more than anyone reads in a mail: about 250 part lines.
 */
export const DIGEST_MAX_BYTES = 48 * 1024;

/** A refusal the mail server will repeat for the same message (SMTP 5xx, RFC 5321, 4.2.1). */
export function isPermanentMailRefusal(err: unknown): boolean {
	const code = (err as { responseCode?: unknown })?.responseCode;
	return typeof code === 'number' && code >= 500 && code < 600;
}

export interface CheckResult {
	/** Parts reported in this check's digest. */
	reported: FlaggedPart[];
	/** Part ids whose notice was cleared (recovered). */
	cleared: number[];
	/** Addresses the digest went to (empty when nothing was new or no purchaser exists). */
	recipients: string[];
}

/** Active purchasers' addresses: the digest's recipients. */
export async function purchaserAddresses(db: DbOrTx): Promise<string[]> {
	const rows = await db
		.select({ email: users.email })
		.from(users)
		.where(and(inArray(users.role, [...DIGEST_RECIPIENTS]), eq(users.status, 'active')));
	return rows.map((r) => r.email).sort();
}

const REASON_WORDS: Record<FlagReason, string> = {
	'reorder-point': 'at or below its reorder point',
	'over-reserved': 'reserved beyond what is on hand'
};

/**
 * The digest's text: one line per part, at most `maxBytes` (UTF-8) in all. When the lines do not fit,
 * the first ones (in the list's order) are kept and a line says how many more are on the board.
 */
export function digestText(list: readonly FlaggedPart[], boardUrl: string, maxBytes = DIGEST_MAX_BYTES): string {
	const lines = list.map(
		(p) =>
			`- ${p.sku} ${p.name}: ${p.available} available (${p.onHand} on hand, ${p.reserved} reserved), reorder point ${p.reorderPoint}; ${REASON_WORDS[p.reason]}.` +
			(p.supplier ? ` Supplier ${p.supplier}` + (p.leadTimeDays != null ? `, lead time ${p.leadTimeDays} days.` : '.') : '')
	);
	const head = [`${list.length} part${list.length === 1 ? ' needs' : 's need'} reordering:`, ''];
	const tail = [
		'',
		`Open the reorder board: ${boardUrl}`,
		'',
		'You get one message when parts become flagged; a part is listed again only after it has recovered.'
	];
	const bytes = (xs: string[]) => Buffer.byteLength(xs.join('\n'), 'utf8');
	const full = [...head, ...lines, ...tail];
	if (bytes(full) <= maxBytes) return full.join('\n');
	// Too long for one message: as many lines as fit with the summary line, the rest on the board.
	const more = (n: number) => `- … and ${n} more part${n === 1 ? '' : 's'}: the whole list is on the reorder board, ${boardUrl}`;
	let budget = maxBytes - bytes([...head, more(list.length), ...tail]) - 1;
	const kept: string[] = [];
	for (const line of lines) {
		const cost = Buffer.byteLength(line, 'utf8') + 1;
		if (cost > budget) break;
		kept.push(line);
		budget -= cost;
	}
	return [...head, ...kept, more(list.length - kept.length), ...tail].join('\n');
}

/** Runs one check (see the module comment). `origin` builds the board link. */
export async function checkFlags(db: DbOrTx, opts: { send: Mailer; origin: string; maxBytes?: number }): Promise<CheckResult> {
	const claimed = await inTransaction(db, async (tx) => {
		const flagged = await flaggedParts(tx);
		const flaggedIds = new Set(flagged.map((f) => f.partId));
		const open = await tx.select({ id: flagNotices.id, partId: flagNotices.partId }).from(flagNotices).where(isNotNull(flagNotices.openPartId));
		const openIds = new Set(open.map((o) => o.partId));

		const recovered = open.filter((o) => !flaggedIds.has(o.partId));
		if (recovered.length) {
			await tx
				.update(flagNotices)
				.set({ openPartId: null, clearedAt: new Date() })
				.where(inArray(
					flagNotices.id,
					recovered.map((r) => r.id)
				));
		}

		const reported: FlaggedPart[] = [];
		const noticeIds: number[] = [];
		const now = new Date();
		// In part id order: each insert takes a shared lock on its part row (foreign key), and writers of several
		// parts (an UPDATE … WHERE id IN …) lock them in id order too, so the two do not deadlock on part rows.
		for (const f of [...flagged].sort((a, b) => a.partId - b.partId)) {
			if (openIds.has(f.partId)) continue;
			const [res] = await tx
				.insert(flagNotices)
				.ignore()
				.values({ partId: f.partId, openPartId: f.partId, reason: f.reason, available: f.available, reportedAt: now });
			if (res.affectedRows === 1) {
				reported.push(f);
				noticeIds.push(res.insertId);
			}
		}
		const bySku = new Map(flagged.map((f, k) => [f.partId, k]));
		reported.sort((a, b) => bySku.get(a.partId)! - bySku.get(b.partId)!); // back to SKU order for the digest

		return { reported, noticeIds, cleared: recovered.map((r) => r.partId) };
	});

	// After the commit: only the check whose notices committed mails them (see the module comment).
	const { reported, noticeIds, cleared } = claimed;
	let recipients: string[] = [];
	if (reported.length) {
		recipients = await purchaserAddresses(db);
		if (recipients.length) {
			const board = new URL('/reorder', opts.origin).toString();
			try {
				await opts.send({
					to: recipients,
					subject: `Reorder: ${reported.length} part${reported.length === 1 ? '' : 's'} flagged (${reported
						.slice(0, 3)
						.map((p) => p.sku)
						.join(', ')}${reported.length > 3 ? ', …' : ''})`,
					text: digestText(reported, board, opts.maxBytes)
				});
			} catch (err) {
				if (isPermanentMailRefusal(err)) {
					// The same message would be refused at every check: the notices stand.
					console.error(`the reorder digest (${reported.length} parts) was refused for good, not retried:`, (err as Error).message);
				} else {
					// Not sent now: the next check reports these parts again.
					await db.delete(flagNotices).where(inArray(flagNotices.id, noticeIds));
					throw err;
				}
			}
		}
	}
	return { reported, cleared, recipients };
}

/** Open notices (for the board: since when a part has been flagged). */
export async function openNotices(db: DbOrTx) {
	return db
		.select({ partId: flagNotices.partId, reportedAt: flagNotices.reportedAt })
		.from(flagNotices)
		.where(isNotNull(flagNotices.openPartId));
}
