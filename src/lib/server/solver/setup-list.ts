/**
 * The list of saved setups for the build pages: the signed-in user's own first, then everyone
 * else's, newest first within each, with the parts (read from the saved solution inside the
 * database, so the rays and figures of each solution are not loaded) and whether the setup's
 * parts are reserved now (one grouped query over the listed setups).
 */
import { and, desc, eq, inArray, like, sql } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { projects, reservations, setups, users } from '$lib/server/db/schema';
import { activeReservation } from '$lib/server/stock/active-reservation';

/** One saved setup as the list shows it. */
export interface SavedSetupRow {
	id: number;
	name: string;
	userName: string;
	/** Saved by the user asking. */
	mine: boolean;
	projectCode: string | null;
	/** ISO time of saving. */
	createdAt: string;
	/** SKUs in the order light meets them. */
	skus: string[];
	/** The question: imaging (also setups saved before the beam modes), beam or afocal. */
	mode: 'imaging' | 'beam' | 'afocal';
	trackMm: number | null;
	magnification: number | null;
	/** Beam: where the target waist lies from z = 0, mm, and the wavelength, nm. */
	targetWaistPositionMm: number | null;
	wavelengthNm: number | null;
	/** Afocal: the expansion asked for. */
	expansion: number | null;
	/** Active, unexpired reservations made for this setup; null when none. */
	reserved: { units: number; partsNeeded: number; until: string } | null;
}

export interface SetupListQuery {
	/** The user asking: their setups come first and are marked `mine`. */
	userId: number;
	/** Only setups whose name contains this text. */
	q?: string;
	/** Only the user's own setups. */
	mineOnly?: boolean;
	limit: number;
	offset?: number;
}

const escapeLike = (text: string) => text.replace(/[\\%_]/g, (c) => `\\${c}`);

/** JSON text → list of strings; anything else → []. */
function stringList(text: unknown): string[] {
	if (typeof text !== 'string') return Array.isArray(text) ? text.map(String) : [];
	try {
		const v: unknown = JSON.parse(text);
		return Array.isArray(v) ? v.map(String) : [];
	} catch {
		return [];
	}
}

const numberOrNull = (v: unknown): number | null => {
	if (v === null || v === undefined || v === '') return null;
	const n = Number(v);
	return Number.isFinite(n) ? n : null;
};

/** A page of saved setups (see the module comment) and how many match in all. */
export async function listSavedSetups(db: DbOrTx, query: SetupListQuery): Promise<{ items: SavedSetupRow[]; total: number }> {
	const conds = [];
	const q = query.q?.trim();
	if (q) conds.push(like(setups.name, `%${escapeLike(q)}%`));
	if (query.mineOnly) conds.push(eq(setups.userId, query.userId));
	const where = conds.length ? and(...conds) : undefined;
	const [rows, [{ total }]] = await Promise.all([
		db
			.select({
				id: setups.id,
				name: setups.name,
				userId: setups.userId,
				userName: users.name,
				projectCode: projects.code,
				createdAt: setups.createdAt,
				skus: sql<string>`JSON_EXTRACT(${setups.solution}, '$.elements[*].sku')`,
				partsNeeded: sql<number>`JSON_LENGTH(${setups.solution}, '$.elements')`,
				trackMm: sql<string | null>`JSON_VALUE(${setups.query}, '$.trackMm')`,
				magnification: sql<string | null>`JSON_VALUE(${setups.query}, '$.magnification')`,
				mode: sql<string | null>`JSON_VALUE(${setups.query}, '$.mode')`,
				targetWaistPositionMm: sql<string | null>`JSON_VALUE(${setups.query}, '$.target.waistPositionMm')`,
				wavelengthNm: sql<string | null>`JSON_VALUE(${setups.query}, '$.wavelengthNm')`,
				expansion: sql<string | null>`JSON_VALUE(${setups.query}, '$.expansion')`
			})
			.from(setups)
			.innerJoin(users, eq(users.id, setups.userId))
			.leftJoin(projects, eq(projects.id, setups.projectId))
			.where(where)
			.orderBy(desc(sql`${setups.userId} = ${query.userId}`), desc(setups.id))
			.limit(query.limit)
			.offset(query.offset ?? 0),
		db.select({ total: sql<number>`count(*)` }).from(setups).where(where)
	]);
	const ids = rows.map((r) => r.id);
	const held = ids.length
		? await db
				.select({
					setupId: reservations.setupId,
					units: sql<string>`sum(${reservations.quantity})`,
					until: sql<Date>`min(${reservations.until})`.mapWith(reservations.until)
				})
				.from(reservations)
				.where(and(inArray(reservations.setupId, ids), activeReservation))
				.groupBy(reservations.setupId)
		: [];
	const heldBy = new Map(held.map((h) => [h.setupId, h]));
	const items = rows.map((r): SavedSetupRow => {
		const h = heldBy.get(r.id);
		return {
			id: r.id,
			name: r.name,
			userName: r.userName,
			mine: r.userId === query.userId,
			projectCode: r.projectCode,
			createdAt: r.createdAt.toISOString(),
			skus: stringList(r.skus),
			trackMm: numberOrNull(r.trackMm),
			magnification: numberOrNull(r.magnification),
			mode: r.mode === 'beam' || r.mode === 'afocal' ? r.mode : 'imaging',
			targetWaistPositionMm: numberOrNull(r.targetWaistPositionMm),
			wavelengthNm: numberOrNull(r.wavelengthNm),
			expansion: numberOrNull(r.expansion),
			reserved: h ? { units: Number(h.units), partsNeeded: Number(r.partsNeeded), until: h.until.toISOString() } : null
		};
	});
	return { items, total: Number(total) };
}
