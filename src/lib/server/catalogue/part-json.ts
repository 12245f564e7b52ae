/**
 * The Part JSON of the API (DESIGN.md): one serializer used by the API, the CSV export
 * and anyone else who hands a part to the outside.
 */
import { desc, inArray } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { measurements, partSurfaces, suppliers, type Measurement, type Part, type PartSurface } from '$lib/server/db/schema';
import { totalsFor, type Totals } from '$lib/server/stock/availability';
import { getDefaultWavelengthNm } from './settings';
import type { EflSource } from './derived';
import { toMajor } from '$lib/money';
import { bandOf } from '$lib/coating';

/** A surface in Part JSON: thickness and material describe the medium after it; the last has neither. */
export interface SurfaceJson {
	radiusMm: number | null;
	thicknessMm?: number;
	material?: string | null;
}

export interface PartJson {
	id: number;
	sku: string;
	name: string;
	kind: Part['kind'];
	diameterMm: number;
	clearApertureMm: number | null;
	surfaces: SurfaceJson[];
	/** Datasheet (nominal) EFL at designWavelengthNm, mm. */
	eflMm: number | null;
	bflMm: number | null;
	centerThicknessMm: number | null;
	designWavelengthNm: number;
	coating: string | null;
	/** The coating band read from `coating` (a range, or one line ±2 %: `$lib/coating`); null when it names no wavelength. */
	coatingBandNm: { minNm: number; maxNm: number } | null;
	supplier: string | null;
	supplierPartNumber: string | null;
	/** Unit price in currency units of `currency` (38.5 = 38.50 EUR). */
	unitPrice: number | null;
	currency: string;
	leadTimeDays: number | null;
	reorderPoint: number;
	reorderQuantity: number;
	notes: string | null;
	/** Usable units in all locations. */
	onHand: number;
	/** On hand minus active, unexpired reservations. */
	available: number;
	/** The latest measurement (the solver uses it), or null. */
	measured: { eflMm: number; wavelengthNm: number; uncertaintyMm: number | null; measuredAt: string } | null;
	/** EFL the catalogue sorts and filters on: at the lab's default wavelength, from `source`. */
	computed: { eflMm: number | null; source: EflSource | null; wavelengthNm: number };
	archived: boolean;
	updatedAt: string;
}

/** Surfaces rows (any order) → Part JSON surfaces in catalogue order. */
export function surfacesJson(rows: readonly Pick<PartSurface, 'position' | 'radiusMm' | 'thicknessMm' | 'materialCode'>[]): SurfaceJson[] {
	const sorted = [...rows].sort((a, b) => a.position - b.position);
	return sorted.map((s, i) =>
		i === sorted.length - 1 ? { radiusMm: s.radiusMm } : { radiusMm: s.radiusMm, thicknessMm: s.thicknessMm ?? 0, material: s.materialCode }
	);
}

/** Builds the Part JSON from a row, its surfaces, supplier name, totals and latest measurement. */
export function toPartJson(
	part: Part,
	extra: {
		surfaces: readonly Pick<PartSurface, 'position' | 'radiusMm' | 'thicknessMm' | 'materialCode'>[];
		supplierName: string | null;
		totals: Totals;
		measured: Pick<Measurement, 'eflMm' | 'wavelengthNm' | 'uncertaintyMm' | 'measuredAt'> | null;
		defaultWavelengthNm: number;
	}
): PartJson {
	const m = extra.measured;
	return {
		id: part.id,
		sku: part.sku,
		name: part.name,
		kind: part.kind,
		diameterMm: part.diameterMm,
		clearApertureMm: part.clearApertureMm,
		surfaces: surfacesJson(extra.surfaces),
		eflMm: part.eflMm,
		bflMm: part.bflMm,
		centerThicknessMm: part.centerThicknessMm,
		designWavelengthNm: part.designWavelengthNm,
		coating: part.coating,
		coatingBandNm: bandOf(part.coatingMinNm, part.coatingMaxNm),
		supplier: extra.supplierName,
		supplierPartNumber: part.supplierPartNumber,
		unitPrice: toMajor(part.unitPriceMinor),
		currency: part.currency,
		leadTimeDays: part.leadTimeDays,
		reorderPoint: part.reorderPoint,
		reorderQuantity: part.reorderQuantity,
		notes: part.notes,
		onHand: extra.totals.onHand,
		available: extra.totals.available,
		measured: m
			? { eflMm: m.eflMm, wavelengthNm: m.wavelengthNm, uncertaintyMm: m.uncertaintyMm, measuredAt: m.measuredAt.toISOString() }
			: null,
		computed: { eflMm: part.paraxialEflMm, source: part.eflSource, wavelengthNm: extra.defaultWavelengthNm },
		archived: part.archivedAt !== null,
		updatedAt: part.updatedAt.toISOString()
	};
}

/** Part JSON of many parts at once (one query per table), in the order of `rows`. */
export async function partsJson(db: DbOrTx, rows: readonly Part[]): Promise<PartJson[]> {
	if (!rows.length) return [];
	const ids = rows.map((r) => r.id);
	const [surfaceRows, supplierRows, measurementRows, totals, wl] = await Promise.all([
		db.select().from(partSurfaces).where(inArray(partSurfaces.partId, ids)),
		db.select({ id: suppliers.id, name: suppliers.name }).from(suppliers),
		db.select().from(measurements).where(inArray(measurements.partId, ids)).orderBy(desc(measurements.measuredAt), desc(measurements.id)),
		totalsFor(db, ids),
		getDefaultWavelengthNm(db)
	]);
	const supplierName = new Map(supplierRows.map((s) => [s.id, s.name]));
	const latest = new Map<number, (typeof measurementRows)[number]>();
	for (const m of measurementRows) if (!latest.has(m.partId)) latest.set(m.partId, m);
	return rows.map((p) =>
		toPartJson(p, {
			surfaces: surfaceRows.filter((s) => s.partId === p.id),
			supplierName: p.supplierId ? (supplierName.get(p.supplierId) ?? null) : null,
			totals: totals.get(p.id)!,
			measured: latest.get(p.id) ?? null,
			defaultWavelengthNm: wl
		})
	);
}
