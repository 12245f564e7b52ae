/**
 * The solver's view of the catalogue and stock, loaded from MariaDB and cached per process
 * by the stock version (bumped in the same transaction as any part, measurement, stock or
 * reservation change), so no instance answers from stale stock: one cheap version query
 * per solve. Reservations also expire with time, so a cached view is reloaded after a minute.
 */
import { and, desc, eq, gt, isNull, sql } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { parts, partSurfaces, measurements, stock, locations, reservations } from '$lib/server/db/schema';
import { currentStockVersion } from '$lib/server/stock/version';
import type { CandidatePart } from './elements';
import { bandOf } from '$lib/coating';
import { syncLabMaterials } from '$lib/server/catalogue/lab-materials';
import type { StockView } from './solve';
import { activeReservation } from '$lib/server/stock/active-reservation';

/** A cached view older than this is reloaded even if the version did not move (reservations expire). */
const MAX_AGE_MS = 60_000;

let cached: { version: number; loadedAt: number; view: StockView } | null = null;
let loading: Promise<StockView> | null = null;

/** Loads every non-archived part with its surfaces, latest measurement, usable stock and availability. */
export async function loadCandidateParts(db: DbOrTx): Promise<CandidatePart[]> {
	const rows = await db.select().from(parts).where(isNull(parts.archivedAt));
	if (!rows.length) return [];
	const surfaceRows = await db.select().from(partSurfaces).orderBy(partSurfaces.partId, partSurfaces.position);
	const measuredRows = await db
		.select()
		.from(measurements)
		.orderBy(measurements.partId, desc(measurements.measuredAt), desc(measurements.id));
	const stockRows = await db
		.select({ partId: stock.partId, locationId: stock.locationId, code: locations.code, name: locations.name, quantity: stock.quantity })
		.from(stock)
		.innerJoin(locations, eq(locations.id, stock.locationId))
		.where(and(eq(stock.condition, 'usable'), gt(stock.quantity, 0)));
	const reservedRows = await db
		.select({ partId: reservations.partId, qty: sql<string>`sum(${reservations.quantity})` })
		.from(reservations)
		.where(activeReservation)
		.groupBy(reservations.partId);

	const surfaces = new Map<number, typeof surfaceRows>();
	for (const s of surfaceRows) {
		const list = surfaces.get(s.partId) ?? [];
		list.push(s);
		surfaces.set(s.partId, list);
	}
	const measured = new Map<number, (typeof measuredRows)[number]>();
	for (const m of measuredRows) if (!measured.has(m.partId)) measured.set(m.partId, m);
	const places = new Map<number, CandidatePart['locations']>();
	for (const s of stockRows) {
		const list = places.get(s.partId) ?? [];
		list.push({ locationId: s.locationId, code: s.code, name: s.name, quantity: s.quantity });
		places.set(s.partId, list);
	}
	const reserved = new Map(reservedRows.map((r) => [r.partId, Number(r.qty)]));

	return rows.map((p) => {
		const surf = surfaces.get(p.id) ?? [];
		const m = measured.get(p.id);
		const locs = places.get(p.id) ?? [];
		const onHand = locs.reduce((a, l) => a + l.quantity, 0);
		return {
			partId: p.id,
			sku: p.sku,
			name: p.name,
			kind: p.kind,
			diameterMm: p.diameterMm,
			clearApertureMm: p.clearApertureMm,
			surfaces: surf.map((s, k) =>
				k === surf.length - 1
					? { radiusMm: s.radiusMm }
					: { radiusMm: s.radiusMm, thicknessMm: s.thicknessMm ?? 0, material: s.materialCode ?? null }
			),
			eflMm: p.eflMm,
			bflMm: p.bflMm,
			centerThicknessMm: p.centerThicknessMm,
			designWavelengthNm: p.designWavelengthNm,
			measured: m ? { eflMm: m.eflMm, wavelengthNm: m.wavelengthNm, uncertaintyMm: m.uncertaintyMm } : null,
			onHand,
			available: Math.max(0, onHand - (reserved.get(p.id) ?? 0)),
			locations: locs,
			coating: p.coating,
			coatingBandNm: bandOf(p.coatingMinNm, p.coatingMaxNm)
		};
	});
}

/** The current stock view, from the cache when the stock version has not moved. */
export async function stockView(db: DbOrTx): Promise<StockView> {
	// The lab's own materials, as another instance may have added one (adding one bumps the stock version).
	await syncLabMaterials(db);
	const version = await currentStockVersion(db);
	if (cached && cached.version === version && Date.now() - cached.loadedAt < MAX_AGE_MS) return cached.view;
	if (!loading) {
		const loadedAt = Date.now();
		loading = loadCandidateParts(db)
			.then((list) => {
				const view = { key: `v${version}-${loadedAt}`, parts: list };
				cached = { version, loadedAt, view };
				return view;
			})
			.finally(() => (loading = null));
	}
	return loading;
}

/** Candidate parts by id (for setups: re-evaluating a saved choice). */
export async function candidatePartsById(db: DbOrTx, ids: number[]): Promise<Map<number, CandidatePart>> {
	const view = await stockView(db);
	const want = new Set(ids);
	return new Map(view.parts.filter((p) => want.has(p.partId)).map((p) => [p.partId, p]));
}

