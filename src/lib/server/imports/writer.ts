/**
 * Batched writes of validated part inputs: one multi-row insert of new parts (their ids come back
 * from the insert itself, INSERT ... RETURNING) and one of their surfaces per batch, one multi-row
 * upsert (by id) of changed parts. The rules stay the catalogue's: rows arrive already validated
 * by `partInputSchema`, the parts row is the catalogue's `columnsOf`, and the stored EFL columns
 * come from its `paraxialColumns` (the same computation as `refreshDerived`), so an imported part
 * is stored exactly as the part form would store it. The statements are built in bulk-sql.ts, not
 * by Drizzle's insert builder, which was the hot spot of the import benchmark.
 */
import { desc } from 'drizzle-orm';
import type { Tx } from '$lib/server/db';
import { measurements, partSurfaces, parts, suppliers } from '$lib/server/db/schema';
import { recordAudit } from '$lib/server/audit';
import { columnsOf, PART_COLUMNS, paraxialColumns, toSurfaceSpecs, type MeasuredEfl, type OpticsPart, type PartInput } from '$lib/server/catalogue';
import { inList, insertReturning, insertRows } from './bulk-sql';

/**
 * The derived EFL columns by optics input: a file lists the same prescription many times (one
 * lens in several coatings, sizes of a series), and `paraxialColumns` is a pure function of these
 * numbers, so each distinct one is computed once per run. Bounded: cleared when it is full.
 */
export class DerivedCache {
	private map = new Map<string, ReturnType<typeof paraxialColumns>>();
	constructor(private readonly maxEntries = 5000) {}
	/** The derived columns of `part` (built only when not cached; `key` is `opticsKey` of the same values). */
	get(key: string, part: () => OpticsPart, wl: number, measured: MeasuredEfl | null): ReturnType<typeof paraxialColumns> {
		let hit = this.map.get(key);
		if (!hit) {
			if (this.map.size >= this.maxEntries) this.map.clear();
			hit = paraxialColumns(part(), wl, measured);
			this.map.set(key, hit);
		}
		return hit;
	}
}

/** A number or null as JSON writes it (finite numbers only reach here: the schema refused the rest). */
const num = (x: number | null | undefined) => (x == null ? 'null' : String(x));
/** A text or null as JSON writes it (quoted, so no text can pass for a separator or a number). */
const str = (x: string | null | undefined) => (x == null ? 'null' : JSON.stringify(x));

/**
 * Every value `paraxialColumns` reads, as one string: the surfaces as `toSurfaceSpecs` gives them
 * (the last without thickness or material), the part's numbers, the wavelength and the measurement.
 * Equal strings mean equal inputs (each value is written as JSON, between fixed separators).
 */
function opticsKey(input: PartInput, cols: ReturnType<typeof columnsOf>, wl: number, measured: MeasuredEfl | null): string {
	const s = input.surfaces;
	let key = `${s.length}`;
	for (let i = 0; i < s.length; i++) {
		key += i === s.length - 1 ? `|${num(s[i].radiusMm)}` : `|${num(s[i].radiusMm)},${num(s[i].thicknessMm ?? 0)},${str(s[i].material)}`;
	}
	return (
		`${key}|${num(cols.eflMm)},${num(cols.bflMm)},${num(cols.centerThicknessMm)},${num(cols.designWavelengthNm)},${num(cols.diameterMm)},` +
		`${num(cols.clearApertureMm)},${str(cols.primaryMaterial)}|${num(wl)}|${measured ? `${num(measured.eflMm)},${num(measured.wavelengthNm)}` : 'null'}`
	);
}

function derivedFor(input: PartInput, cols: ReturnType<typeof columnsOf>, wl: number, measured: MeasuredEfl | null, cache: DerivedCache) {
	return cache.get(
		opticsKey(input, cols, wl, measured),
		() => ({
			surfaces: toSurfaceSpecs(input.surfaces),
			eflMm: cols.eflMm,
			bflMm: cols.bflMm,
			centerThicknessMm: cols.centerThicknessMm,
			designWavelengthNm: cols.designWavelengthNm,
			diameterMm: cols.diameterMm,
			clearApertureMm: cols.clearApertureMm,
			primaryMaterial: cols.primaryMaterial
		}),
		wl,
		measured
	);
}

function surfaceRows(partId: number, input: PartInput) {
	const specs = toSurfaceSpecs(input.surfaces);
	return specs.map((s, i) => ({
		partId,
		position: i,
		radiusMm: s.radiusMm,
		thicknessMm: i === specs.length - 1 ? null : (s.thicknessMm ?? 0),
		materialCode: i === specs.length - 1 ? null : (s.material ?? null)
	}));
}

/** Supplier name (any case) → id, creating suppliers that do not exist yet. */
export class SupplierIds {
	private byName = new Map<string, number>();
	constructor(rows: readonly { id: number; name: string }[]) {
		for (const r of rows) this.byName.set(r.name.toLowerCase(), r.id);
	}
	known(name: string | null | undefined): number | null {
		return name ? (this.byName.get(name.toLowerCase()) ?? null) : null;
	}
	async resolve(tx: Tx, name: string | null | undefined, actorId: number): Promise<number | null> {
		if (!name) return null;
		const found = this.known(name);
		if (found !== null) return found;
		const [{ id }] = await tx.insert(suppliers).values({ name }).$returningId();
		await recordAudit(tx, { actorId, action: 'supplier.create', targetType: 'supplier', targetId: id, detail: { name, via: 'import' } });
		this.byName.set(name.toLowerCase(), id);
		return id;
	}
}

/** Creates the suppliers named by `inputs` that do not exist yet, in the order the rows name them. */
async function resolveSuppliers(tx: Tx, inputs: readonly PartInput[], ctx: { suppliers: SupplierIds; actorId: number }) {
	for (const input of inputs) if (input.supplier && ctx.suppliers.known(input.supplier) === null) await ctx.suppliers.resolve(tx, input.supplier, ctx.actorId);
}

/** Every written column of a parts row (the catalogue's columnsOf plus the derived EFL columns). */
const PART_KEYS = [...PART_COLUMNS, 'paraxialEflMm', 'eflSource'] as const;
const SURFACE_KEYS = ['partId', 'position', 'radiusMm', 'thicknessMm', 'materialCode'] as const;

/** What the writer keeps for a run: suppliers by name, the lab's wavelength, who writes, derived EFLs. */
export interface WriteContext {
	suppliers: SupplierIds;
	defaultWavelengthNm: number;
	actorId: number;
	derived: DerivedCache;
}

/** Writes one batch: `creates` are new parts, `updates` carry the id of the part they replace. */
export async function writeBatch(tx: Tx, batch: { creates: PartInput[]; updates: { id: number; input: PartInput }[] }, ctx: WriteContext) {
	const wl = ctx.defaultWavelengthNm;
	if (batch.creates.length) {
		await resolveSuppliers(tx, batch.creates, ctx);
		const rows = batch.creates.map((input) => {
			const cols = columnsOf(input, ctx.suppliers.known(input.supplier));
			return Object.assign(cols, derivedFor(input, cols, wl, null, ctx.derived));
		});
		// The new ids, as MariaDB gave them (INSERT ... RETURNING; matched by SKU, which is unique).
		const back = await insertReturning(tx, parts, PART_KEYS, rows, ['id', 'sku']);
		if (back.length !== rows.length) throw new Error(`the insert of ${rows.length} parts gave back ${back.length} ids`);
		const idBySku = new Map(back.map((r) => [String(r.sku).toLowerCase(), Number(r.id)]));
		const ids = rows.map((r) => idBySku.get(r.sku.toLowerCase())!);
		const surfaces = batch.creates.flatMap((input, i) => surfaceRows(ids[i], input));
		if (surfaces.length) await insertRows(tx, partSurfaces, SURFACE_KEYS, surfaces);
	}
	if (batch.updates.length) {
		const ids = batch.updates.map((u) => u.id);
		const latest = new Map<number, { eflMm: number; wavelengthNm: number }>();
		const ms = await tx
			.select({ partId: measurements.partId, eflMm: measurements.eflMm, wavelengthNm: measurements.wavelengthNm })
			.from(measurements)
			.where(inList(measurements.partId, ids))
			.orderBy(desc(measurements.measuredAt), desc(measurements.id));
		for (const m of ms) if (!latest.has(m.partId)) latest.set(m.partId, m);
		await resolveSuppliers(
			tx,
			batch.updates.map((u) => u.input),
			ctx
		);
		const rows = batch.updates.map((u) => {
			const cols = columnsOf(u.input, ctx.suppliers.known(u.input.supplier));
			return Object.assign(cols, { id: u.id }, derivedFor(u.input, cols, wl, latest.get(u.id) ?? null, ctx.derived));
		});
		// Rows carry their primary key, so ON DUPLICATE KEY turns each into an update of that part.
		await insertRows(tx, parts, ['id', ...PART_KEYS], rows, PART_KEYS);
		await tx.delete(partSurfaces).where(inList(partSurfaces.partId, ids));
		const surfaces = batch.updates.flatMap((u) => surfaceRows(u.id, u.input));
		if (surfaces.length) await insertRows(tx, partSurfaces, SURFACE_KEYS, surfaces);
	}
}
