/**
 * The reorder board: flagged parts and parts whose purchase would unlock a saved setup, with
 * the figures a purchaser orders by. Usage is taken from the ledger over the last
 * USAGE_DAYS days: units issued + scrapped − returned (net consumption), not below 0.
 */
import { and, eq, gt, inArray, isNull, sql } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { movements, parts, reservations, setups, suppliers } from '$lib/server/db/schema';
import { totalsFor } from '$lib/server/stock/availability';
import { availableOf, explainSuggestion, flagReason, suggestedQuantity, type FlagReason } from './rules';
import { setupIndex, shortfalls, type ElementRef, type SetupRef } from './unlocks';
import { onOrderByPart } from './requests';
import { openNotices } from './flags';
import { toMajor } from '$lib/money';
import { activeReservation } from '$lib/server/stock/active-reservation';

export const USAGE_DAYS = 90;

export interface BoardRow {
	partId: number;
	sku: string;
	name: string;
	supplier: string | null;
	supplierPartNumber: string | null;
	/** Currency units (38.5). */
	unitPrice: number | null;
	currency: string;
	leadTimeDays: number | null;
	reorderPoint: number;
	reorderQuantity: number;
	/** Usable units on hand (the only ones that count). */
	onHand: number;
	/** Units waiting for inspection and damaged units: shown, never counted as on hand. */
	quarantine: number;
	damaged: number;
	reserved: number;
	available: number;
	/** Net units used over the last USAGE_DAYS days (from the ledger). */
	usage90d: number;
	/** Units on open requests, not yet received. */
	onOrder: number;
	suggestedQuantity: number;
	/** The arithmetic behind `suggestedQuantity`, in words. */
	suggestion: string;
	/** Why the part is flagged; null when it is on the board only because it unlocks setups. */
	flag: FlagReason | null;
	/** Since when the current flag has been reported (the digest), or null. */
	flaggedSince: string | null;
	/** Saved setups that use the part. */
	setupsUsing: number;
	/** Saved setups that cannot be built now and that buying this part alone would unlock. */
	setupsUnlocked: number;
	unlocks: { setupId: number; name: string; missing: number }[];
}

/** Net usage per part over the last `days` days. */
export async function usageByPart(db: DbOrTx, days = USAGE_DAYS): Promise<Map<number, number>> {
	const rows = await db
		.select({
			partId: movements.partId,
			q: sql<string>`sum(case when ${movements.kind} in ('issue', 'scrap') then ${movements.quantity} when ${movements.kind} = 'return' then -${movements.quantity} else 0 end)`
		})
		.from(movements)
		.where(and(inArray(movements.kind, ['issue', 'scrap', 'return']), gt(movements.at, sql`utc_timestamp() - interval ${days} day`)))
		.groupBy(movements.partId);
	return new Map(rows.map((r) => [r.partId, Math.max(0, Number(r.q))]));
}

/** Saved setups with the elements of their saved solution. */
export async function savedSetups(db: DbOrTx): Promise<SetupRef[]> {
	const rows = await db.select({ id: setups.id, name: setups.name, solution: setups.solution }).from(setups);
	return rows.map((r) => {
		const sol = r.solution as { elements?: ElementRef[] } | null;
		const elements = Array.isArray(sol?.elements) ? sol.elements.filter((e) => Number.isInteger(e?.partId)) : [];
		return { id: r.id, name: r.name, elements };
	});
}

/**
 * The board's rows: every flagged part, and every part that alone would unlock a saved setup.
 * `partIds` limits the rows to those parts whether they are flagged or not (the CSV export of a selection).
 */
export async function boardRows(db: DbOrTx, opts: { partIds?: readonly number[] } = {}): Promise<BoardRow[]> {
	const only = opts.partIds ? new Set(opts.partIds) : null;
	const list = await db
		.select({ p: parts, supplier: suppliers.name })
		.from(parts)
		.leftJoin(suppliers, eq(suppliers.id, parts.supplierId))
		.where(isNull(parts.archivedAt))
		.orderBy(parts.sku);
	const ids = list.map((r) => r.p.id);
	const [totals, usage, onOrder, saved, notices] = await Promise.all([
		totalsFor(db, ids),
		usageByPart(db),
		onOrderByPart(db),
		savedSetups(db),
		openNotices(db)
	]);
	const held = await heldBySetup(db, saved.map((s) => s.id));
	// Setups may name archived parts: those count as not available. A setup's own reservations count for it.
	const { using, unlocking } = setupIndex(saved, (id, setupId) =>
		totals.has(id) ? availableOf(totals.get(id)!) + (held.get(setupId)?.get(id) ?? 0) : 0
	);
	const since = new Map(notices.map((n) => [n.partId, n.reportedAt.toISOString()]));
	const rows: BoardRow[] = [];
	for (const { p, supplier } of list) {
		const t = totals.get(p.id)!;
		const flag = flagReason({ onHand: t.onHand, reserved: t.reserved, reorderPoint: p.reorderPoint });
		const unlocks = unlocking.get(p.id) ?? [];
		if (only ? !only.has(p.id) : !flag && !unlocks.length) continue;
		const u = usage.get(p.id) ?? 0;
		const ordered = onOrder.get(p.id) ?? 0;
		const figures = {
			onHand: t.onHand,
			reserved: t.reserved,
			reorderPoint: p.reorderPoint,
			reorderQuantity: p.reorderQuantity,
			usage: u,
			usageDays: USAGE_DAYS,
			leadTimeDays: p.leadTimeDays,
			onOrder: ordered
		};
		const byRule = suggestedQuantity(figures);
		// a part on the board only for an unlock: at least the units the setups miss
		const missing = Math.max(0, ...unlocks.map((x) => x.missing));
		const forSetups = flag ? 0 : Math.max(0, missing - ordered);
		const suggested = Math.max(byRule, forSetups);
		let suggestion = explainSuggestion({ ...figures, quarantine: t.quarantine, damaged: t.damaged });
		if (forSetups > byRule) suggestion = `a saved setup misses ${missing}${ordered ? ` − ${ordered} on order` : ''} = ${forSetups} (the reorder rule alone: ${byRule})`;
		rows.push({
			partId: p.id,
			sku: p.sku,
			name: p.name,
			supplier,
			supplierPartNumber: p.supplierPartNumber,
			unitPrice: toMajor(p.unitPriceMinor),
			currency: p.currency,
			leadTimeDays: p.leadTimeDays,
			reorderPoint: p.reorderPoint,
			reorderQuantity: p.reorderQuantity,
			onHand: t.onHand,
			quarantine: t.quarantine,
			damaged: t.damaged,
			reserved: t.reserved,
			available: availableOf(t),
			usage90d: u,
			onOrder: ordered,
			suggestedQuantity: suggested,
			suggestion,
			flag,
			flaggedSince: since.get(p.id) ?? null,
			setupsUsing: using.get(p.id)?.length ?? 0,
			setupsUnlocked: unlocks.length,
			unlocks
		});
	}
	return rows;
}

export interface WaitingSetup {
	setupId: number;
	name: string;
	/** Parts the saved solution is short of, with the units missing and what buying them costs. */
	short: { partId: number; sku: string; missing: number; unitPrice: number | null; currency: string; leadTimeDays: number | null; supplier: string | null }[];
}

/** Units each saved setup's own active, unexpired reservations hold, by setup and part. */
export async function heldBySetup(db: DbOrTx, setupIds: number[]): Promise<Map<number, Map<number, number>>> {
	const held = new Map<number, Map<number, number>>();
	if (!setupIds.length) return held;
	const rows = await db
		.select({ setupId: reservations.setupId, partId: reservations.partId, quantity: sql<string>`sum(${reservations.quantity})` })
		.from(reservations)
		.where(and(inArray(reservations.setupId, setupIds), activeReservation))
		.groupBy(reservations.setupId, reservations.partId);
	for (const r of rows) {
		if (r.setupId === null) continue;
		const m = held.get(r.setupId) ?? new Map<number, number>();
		m.set(r.partId, Number(r.quantity));
		held.set(r.setupId, m);
	}
	return held;
}

/**
 * Saved setups that cannot be built from stock now, with what they are short of (from the saved
 * solution). As on the setup's own page, units its own reservations hold count as available to it.
 */
export async function waitingSetups(db: DbOrTx): Promise<WaitingSetup[]> {
	const saved = await savedSetups(db);
	const ids = [...new Set(saved.flatMap((s) => s.elements.map((e) => e.partId)))];
	if (!ids.length) return [];
	const [totals, info, held] = await Promise.all([
		totalsFor(db, ids),
		db
			.select({ p: parts, supplier: suppliers.name })
			.from(parts)
			.leftJoin(suppliers, eq(suppliers.id, parts.supplierId))
			.where(inArray(parts.id, ids)),
		heldBySetup(db, saved.map((s) => s.id))
	]);
	const byId = new Map(info.map((r) => [r.p.id, r]));
	const availTo = (setupId: number) => (id: number) =>
		byId.get(id)?.p.archivedAt ? 0 : (totals.get(id)?.available ?? 0) + (held.get(setupId)?.get(id) ?? 0);
	return saved
		.map((s) => ({
			setupId: s.id,
			name: s.name,
			short: shortfalls(s.elements, availTo(s.id)).map((x) => {
				const r = byId.get(x.partId);
				return {
					partId: x.partId,
					sku: r?.p.sku ?? `#${x.partId}`,
					missing: x.missing,
					unitPrice: toMajor(r?.p.unitPriceMinor),
					currency: r?.p.currency ?? 'EUR',
					leadTimeDays: r?.p.leadTimeDays ?? null,
					supplier: r?.supplier ?? null
				};
			})
		}))
		.filter((s) => s.short.length > 0)
		.sort((a, b) => a.short.length - b.short.length || a.setupId - b.setupId);
}
