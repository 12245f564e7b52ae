/**
 * The parts service: create, update, archive, read and list catalogue parts. Every write
 * validates with `partInputSchema` (zod + optics checks), stores the surfaces, refreshes
 * the derived EFL columns, bumps the stock version and records an audit event, in one
 * transaction. The data layer knows nothing of HTTP: failures are `ZodError` (bad input)
 * or `DomainError` (404 not found, 409 duplicate SKU / supplier part number).
 *
 * Used by the part pages and API, by CSV imports (validate rows with `partInputSchema`,
 * then `createPart` / `updatePart`) and by the solver (`getPart`).
 *
 * @example
 *   import * as parts from '$lib/server/catalogue/parts';
 *   const { id } = await parts.createPart(db, body, { id: user.id });
 *   const json = await parts.getPartJson(db, id);
 */
import { and, desc, eq } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { measurements, movements, partSurfaces, parts, reservations, stock, suppliers, type Part } from '$lib/server/db/schema';
import type { Role } from '$lib/server/db/schema';
import { DomainError, NotFound } from '$lib/server/errors';
import { recordAudit } from '$lib/server/audit';
import { changeStock } from '$lib/server/stock/version';
import { opticsPartOf, paraxialColumns, type MeasuredEfl } from './derived';
import { partInputSchema, partPatchSchema, toSurfaceSpecs, type PartInput, type PartPatch } from './part-input';
import { PART_FIELD, PART_FIELD_NAMES, type PartFieldName } from '$lib/catalogue/part-fields';
import { partsJson, type PartJson } from './part-json';
import { getDefaultWavelengthNm } from './settings';
import { toMajor, toMinor } from '$lib/money';
import { parseCoatingBand } from '$lib/coating';
import { syncLabMaterials } from './lab-materials';
import { inSet, PART_PATCHERS } from '$lib/roles';

export { partInputSchema, partPatchSchema, partFieldsSchema, PURCHASING_FIELDS } from './part-input';
export type { PartInput, PartPatch } from './part-input';
export { partsJson, toPartJson, type PartJson } from './part-json';
export { computeDerived, paraxialColumns } from './derived';
export { listParts, listQuerySchema, type ListQuery } from './list';

export interface Actor {
	id: number;
	role?: Role;
}

export class PartNotFound extends NotFound {
	constructor(id: number | string) {
		super(`There is no part ${id}.`);
	}
}

/** A part with everything the part page and Part JSON need. */
export interface PartRecord {
	part: Part;
	surfaces: (typeof partSurfaces.$inferSelect)[];
	supplierName: string | null;
	latestMeasurement: typeof measurements.$inferSelect | null;
}

async function supplierIdFor(tx: DbOrTx, name: string | null | undefined, actor: Actor): Promise<number | null> {
	if (!name) return null;
	const [found] = await tx.select({ id: suppliers.id }).from(suppliers).where(eq(suppliers.name, name)).limit(1);
	if (found) return found.id;
	// A new supplier name (typed in the form or met in an import) becomes a supplier.
	const [{ id }] = await tx.insert(suppliers).values({ name }).$returningId();
	await recordAudit(tx, { actorId: actor.id, action: 'supplier.create', targetType: 'supplier', targetId: id, detail: { name } });
	return id;
}

/**
 * Fields stored as the parts column of the same name and value; the others are stored otherwise:
 * the surfaces in their own table, the supplier by id, the price in cents.
 */
const STORED_OTHERWISE = ['surfaces', 'supplier', 'unitPrice'] as const;
type PlainColumnField = Exclude<PartFieldName, (typeof STORED_OTHERWISE)[number]>;
const PLAIN_COLUMN_FIELDS = PART_FIELD_NAMES.filter((f) => !(STORED_OTHERWISE as readonly string[]).includes(f)) as readonly PlainColumnField[];
type PlainColumns = { [K in PlainColumnField]-?: Exclude<PartInput[K], undefined> };

/** The parts row of a validated input (without the derived EFL columns); also used by CSV imports. */
export function columnsOf(input: PartInput, supplierId: number | null) {
	// The schema's check refused a text whose band cannot be read, so a failed parse here is no band.
	const coating = parseCoatingBand(input.coating);
	const band = coating.ok ? coating.band : null;
	const firstGlass = input.surfaces.find((s, i) => i < input.surfaces.length - 1 && s.material)?.material ?? null;
	// One object filled in place (the import writes one per row: no entry arrays, no copy).
	const row = {} as Record<PlainColumnField, unknown>;
	for (const f of PLAIN_COLUMN_FIELDS) row[f] = input[f] ?? null;
	return Object.assign(row as PlainColumns, {
		primaryMaterial: firstGlass ? firstGlass.toLowerCase() : null,
		coatingMinNm: band?.minNm ?? null,
		coatingMaxNm: band?.maxNm ?? null,
		supplierId,
		unitPriceMinor: input.unitPrice == null ? null : toMinor(input.unitPrice)
	});
}

/** Every column `columnsOf` writes (a batch insert names them). */
export const PART_COLUMNS = [...PLAIN_COLUMN_FIELDS, 'primaryMaterial', 'coatingMinNm', 'coatingMaxNm', 'supplierId', 'unitPriceMinor'] as const satisfies readonly (keyof ReturnType<typeof columnsOf>)[];

async function assertUnique(tx: DbOrTx, cols: ReturnType<typeof columnsOf>, exceptId: number | null) {
	const [sku] = await tx.select({ id: parts.id }).from(parts).where(eq(parts.sku, cols.sku)).limit(1);
	if (sku && sku.id !== exceptId) {
		throw new DomainError(409, 'duplicate-sku', `The SKU ${cols.sku} is already in the catalogue.`, { sku: 'This SKU is already in use.' });
	}
	if (cols.supplierId !== null && cols.supplierPartNumber) {
		const [pn] = await tx
			.select({ id: parts.id })
			.from(parts)
			.where(and(eq(parts.supplierId, cols.supplierId), eq(parts.supplierPartNumber, cols.supplierPartNumber)))
			.limit(1);
		if (pn && pn.id !== exceptId) {
			throw new DomainError(409, 'duplicate-supplier-part-number', 'Another part already has this supplier part number.', {
				supplierPartNumber: 'Another part of this supplier has this number.'
			});
		}
	}
}

async function writeSurfaces(tx: DbOrTx, partId: number, input: PartInput) {
	await tx.delete(partSurfaces).where(eq(partSurfaces.partId, partId));
	if (!input.surfaces.length) return;
	const specs = toSurfaceSpecs(input.surfaces);
	await tx.insert(partSurfaces).values(
		specs.map((s, i) => ({
			partId,
			position: i,
			radiusMm: s.radiusMm,
			thicknessMm: i === specs.length - 1 ? null : (s.thicknessMm ?? 0),
			materialCode: i === specs.length - 1 ? null : (s.material ?? null)
		}))
	);
}

async function latestMeasurementOf(db: DbOrTx, partId: number) {
	const [m] = await db
		.select()
		.from(measurements)
		.where(eq(measurements.partId, partId))
		.orderBy(desc(measurements.measuredAt), desc(measurements.id))
		.limit(1);
	return m ?? null;
}

/**
 * Recomputes and stores the part's EFL at the lab's default wavelength (from its
 * prescription, its latest measurement rescaled, or its datasheet numbers). Call it
 * inside the transaction that changed the part or its measurements.
 */
export async function refreshDerived(tx: DbOrTx, partId: number, defaultWavelengthNm?: number) {
	const [part] = await tx.select().from(parts).where(eq(parts.id, partId)).limit(1);
	if (!part) throw new PartNotFound(partId);
	const rows = await tx.select().from(partSurfaces).where(eq(partSurfaces.partId, partId)).orderBy(partSurfaces.position);
	const m = await latestMeasurementOf(tx, partId);
	const wl = defaultWavelengthNm ?? (await getDefaultWavelengthNm(tx));
	const cols = paraxialColumns(
		opticsPartOf(part, rows),
		wl,
		m ? ({ eflMm: m.eflMm, wavelengthNm: m.wavelengthNm } satisfies MeasuredEfl) : null
	);
	await tx.update(parts).set(cols).where(eq(parts.id, partId));
	return cols;
}

/** Creates a part from unknown input (throws ZodError / DomainError 409). Returns its id. */
export async function createPart(db: DbOrTx, input: unknown, actor: Actor): Promise<{ id: number }> {
	await syncLabMaterials(db);
	const data = partInputSchema.parse(input);
	return changeStock(db, async (tx) => {
		const cols = columnsOf(data, await supplierIdFor(tx, data.supplier, actor));
		await assertUnique(tx, cols, null);
		const [{ id }] = await tx.insert(parts).values(cols).$returningId();
		await writeSurfaces(tx, id, data);
		await refreshDerived(tx, id);
		await recordAudit(tx, { actorId: actor.id, action: 'part.create', targetType: 'part', targetId: id, detail: { sku: data.sku } });
		return { id };
	});
}

/** The stored part in input form (what the edit form starts from and a PATCH merges into). */
export function toInput(record: PartRecord): PartInput {
	const p = record.part;
	const specs = [...record.surfaces].sort((a, b) => a.position - b.position);
	const plain = Object.fromEntries(PLAIN_COLUMN_FIELDS.map((f) => [f, p[f]])) as PlainColumns;
	return {
		...plain,
		surfaces: specs.map((s, i) =>
			i === specs.length - 1 ? { radiusMm: s.radiusMm } : { radiusMm: s.radiusMm, thicknessMm: s.thicknessMm ?? 0, material: s.materialCode }
		),
		supplier: record.supplierName,
		unitPrice: toMajor(p.unitPriceMinor)
	};
}

/**
 * Field-level rule of PATCH: each field names who may change it (`editors` in the descriptor):
 * stock editors (admin, stockroom) any field, a purchaser only the purchasing fields (supplier,
 * supplier part number, price, currency, lead time, reorder point and quantity). Anything else is 403.
 */
export function assertPatchAllowed(role: Role | undefined, patch: PartPatch) {
	if (!inSet(role, PART_PATCHERS)) throw new DomainError(403, 'forbidden', 'Your role may not change parts.');
	const other = (Object.keys(patch) as PartFieldName[]).filter((k) => !inSet(role, PART_FIELD[k].editors));
	if (other.length) {
		throw new DomainError(403, 'forbidden', `A purchaser may change only the purchasing fields, not: ${other.join(', ')}.`);
	}
}

/**
 * Updates a part with a partial input (any subset of the fields; `surfaces` replaces all
 * surfaces). The merged part is validated as a whole. Applies `assertPatchAllowed` when
 * the actor carries a role.
 */
export async function updatePart(db: DbOrTx, id: number, patch: unknown, actor: Actor): Promise<{ id: number }> {
	await syncLabMaterials(db);
	const data = partPatchSchema.parse(patch);
	if (actor.role) assertPatchAllowed(actor.role, data);
	return changeStock(db, async (tx) => {
		const record = await getPart(tx, id, { forUpdate: true });
		if (!record) throw new PartNotFound(id);
		const merged = partInputSchema.parse({ ...toInput(record), ...data });
		const cols = columnsOf(merged, await supplierIdFor(tx, merged.supplier, actor));
		await assertUnique(tx, cols, id);
		await tx.update(parts).set(cols).where(eq(parts.id, id));
		if (data.surfaces) await writeSurfaces(tx, id, merged);
		await refreshDerived(tx, id);
		await recordAudit(tx, { actorId: actor.id, action: 'part.update', targetType: 'part', targetId: id, detail: { fields: Object.keys(data) } });
		return { id };
	});
}

/**
 * Removes a part from the catalogue. A part that has stock, a ledger, reservations or
 * measurements is archived (hidden from the catalogue and the solver, its history kept);
 * one that never had any is deleted outright.
 */
export async function archivePart(db: DbOrTx, id: number, actor: Actor): Promise<{ id: number; outcome: 'archived' | 'deleted' }> {
	return changeStock(db, async (tx) => {
		const [part] = await tx.select().from(parts).where(eq(parts.id, id)).for('update');
		if (!part) throw new PartNotFound(id);
		const has = async (table: typeof stock | typeof movements | typeof reservations | typeof measurements) =>
			(await tx.select({ id: table.id }).from(table).where(eq(table.partId, id)).limit(1)).length > 0;
		const history = (await has(stock)) || (await has(movements)) || (await has(reservations)) || (await has(measurements));
		let outcome: 'archived' | 'deleted' = 'archived';
		if (history) {
			if (!part.archivedAt) await tx.update(parts).set({ archivedAt: new Date() }).where(eq(parts.id, id));
		} else {
			try {
				await tx.transaction(async (sp) => {
					await sp.delete(partSurfaces).where(eq(partSurfaces.partId, id));
					await sp.delete(parts).where(eq(parts.id, id));
				});
				outcome = 'deleted';
			} catch {
				// Referenced from another area (e.g. a datasheet or a purchase request): keep it, archived.
				await tx.update(parts).set({ archivedAt: new Date() }).where(eq(parts.id, id));
			}
		}
		await recordAudit(tx, { actorId: actor.id, action: `part.${outcome === 'deleted' ? 'delete' : 'archive'}`, targetType: 'part', targetId: id, detail: { sku: part.sku } });
		return { id, outcome };
	});
}

/** Brings an archived part back into the catalogue. */
export async function restorePart(db: DbOrTx, id: number, actor: Actor) {
	return changeStock(db, async (tx) => {
		const [part] = await tx.select({ id: parts.id }).from(parts).where(eq(parts.id, id)).for('update');
		if (!part) throw new PartNotFound(id);
		await tx.update(parts).set({ archivedAt: null }).where(eq(parts.id, id));
		await recordAudit(tx, { actorId: actor.id, action: 'part.restore', targetType: 'part', targetId: id });
		return { id };
	});
}

/** One part with its surfaces, supplier name and latest measurement, or null. */
export async function getPart(db: DbOrTx, id: number, opts: { forUpdate?: boolean } = {}): Promise<PartRecord | null> {
	const q = db.select().from(parts).where(eq(parts.id, id));
	const [part] = opts.forUpdate ? await q.for('update') : await q;
	if (!part) return null;
	const surfaces = await db.select().from(partSurfaces).where(eq(partSurfaces.partId, id)).orderBy(partSurfaces.position);
	const supplier = part.supplierId
		? ((await db.select({ name: suppliers.name }).from(suppliers).where(eq(suppliers.id, part.supplierId)))[0]?.name ?? null)
		: null;
	return { part, surfaces, supplierName: supplier, latestMeasurement: await latestMeasurementOf(db, id) };
}

/** Finds a part id by SKU (for imports), or null. */
export async function findPartIdBySku(db: DbOrTx, sku: string): Promise<number | null> {
	const [row] = await db.select({ id: parts.id }).from(parts).where(eq(parts.sku, sku)).limit(1);
	return row?.id ?? null;
}

/** Part JSON of one part; throws 404 when it does not exist. */
export async function getPartJson(db: DbOrTx, id: number): Promise<PartJson> {
	const [part] = await db.select().from(parts).where(eq(parts.id, id));
	if (!part) throw new PartNotFound(id);
	return (await partsJson(db, [part]))[0];
}
