import {
	datetime,
	double,
	index,
	int,
	json,
	mysqlEnum,
	mysqlTable,
	text,
	timestamp,
	uniqueIndex,
	varchar,
	char
} from 'drizzle-orm/mysql-core';
import { id, ref } from './columns';
import { users } from './auth';
import { DEFAULT_WAVELENGTH_NM } from '../../../optics/materials';
import { PART_KINDS } from '../../../catalogue/part-fields';


/** Kinds of catalogue part: the part field descriptor holds them (the API, the form and the import read them there). */
export { PART_KINDS, type PartKind } from '../../../catalogue/part-fields';

/**
 * Optical materials. `code` is what a part surface refers to: an open material name with a
 * published Sellmeier formula built into the optics core (e.g. 'fused-silica', 'caf2'), a six-digit
 * glass code ('517642'), or a material the lab added from a supplier's datasheet: then `coefficients`
 * holds its Sellmeier or Cauchy coefficients (`model`), `minNm`–`maxNm` the range the datasheet states
 * and `source` where they come from (see `src/lib/server/catalogue/lab-materials.ts`). nd and vd are
 * null for a lab material whose range leaves out the d, F or C line.
 */
export const materials = mysqlTable(
	'materials',
	{
		id: id(),
		code: varchar('code', { length: 32 }).notNull(),
		name: varchar('name', { length: 120 }).notNull(),
		model: mysqlEnum('model', ['sellmeier', 'cauchy', 'glass-code']).notNull(),
		nd: double('nd'),
		vd: double('vd'),
		notes: text('notes'),
		/** Lab materials: `{ "b": [...], "c": [...] }` (Sellmeier, c in µm²) or `{ "terms": [A, B, C, ...] }` (Cauchy, λ in µm). */
		coefficients: json('coefficients'),
		minNm: double('min_nm'),
		maxNm: double('max_nm'),
		source: text('source'),
		createdBy: ref('created_by').references(() => users.id),
		createdAt: timestamp('created_at').defaultNow()
	},
	(t) => [uniqueIndex('materials_code_uq').on(t.code)]
);

export const suppliers = mysqlTable(
	'suppliers',
	{
		id: id(),
		name: varchar('name', { length: 120 }).notNull(),
		contactEmail: varchar('contact_email', { length: 254 }),
		notes: text('notes'),
		/** The CSV column mapping last used for this supplier's lists. */
		importMapping: json('import_mapping'),
		createdAt: timestamp('created_at').notNull().defaultNow()
	},
	(t) => [uniqueIndex('suppliers_name_uq').on(t.name)]
);

export const parts = mysqlTable(
	'parts',
	{
		id: id(),
		sku: varchar('sku', { length: 40 }).notNull(),
		name: varchar('name', { length: 200 }).notNull(),
		kind: mysqlEnum('kind', PART_KINDS).notNull(),
		diameterMm: double('diameter_mm').notNull(),
		/** Null means the default: 90 % of the diameter (common practice). */
		clearApertureMm: double('clear_aperture_mm'),
		/** Nominal EFL from the datasheet, at designWavelengthNm. */
		eflMm: double('efl_mm'),
		bflMm: double('bfl_mm'),
		/** Centre thickness; for parts without a prescription (black-box model). */
		centerThicknessMm: double('center_thickness_mm'),
		designWavelengthNm: double('design_wavelength_nm').notNull().default(DEFAULT_WAVELENGTH_NM),
		/** EFL computed by the optics core at the lab's default wavelength (or measured, rescaled); used for sort and filter. */
		paraxialEflMm: double('paraxial_efl_mm'),
		eflSource: mysqlEnum('efl_source', ['prescription', 'nominal', 'measured']),
		/** Material code of the first glass, for the material filter. */
		primaryMaterial: varchar('primary_material', { length: 32 }),
		coating: varchar('coating', { length: 80 }),
		/** The coating band read from `coating` (`$lib/coating`): both null when the text names no wavelength. */
		coatingMinNm: double('coating_min_nm'),
		coatingMaxNm: double('coating_max_nm'),
		supplierId: ref('supplier_id').references(() => suppliers.id),
		supplierPartNumber: varchar('supplier_part_number', { length: 80 }),
		/** Money in integer minor units (cents) of `currency`. */
		unitPriceMinor: int('unit_price_minor'),
		currency: char('currency', { length: 3 }).notNull().default('EUR'),
		leadTimeDays: int('lead_time_days'),
		reorderPoint: int('reorder_point').notNull().default(0),
		reorderQuantity: int('reorder_quantity').notNull().default(0),
		notes: text('notes'),
		archivedAt: datetime('archived_at'),
		createdAt: timestamp('created_at').notNull().defaultNow(),
		updatedAt: timestamp('updated_at').notNull().defaultNow().onUpdateNow()
	},
	(t) => [
		uniqueIndex('parts_sku_uq').on(t.sku),
		uniqueIndex('parts_supplier_pn_uq').on(t.supplierId, t.supplierPartNumber),
		index('parts_kind_idx').on(t.kind),
		index('parts_name_idx').on(t.name),
		index('parts_efl_idx').on(t.paraxialEflMm),
		index('parts_diameter_idx').on(t.diameterMm),
		index('parts_material_idx').on(t.primaryMaterial),
		index('parts_coating_idx').on(t.coating),
		// The catalogue's "recently changed" sort. (A FULLTEXT index parts_text_ft on sku, name and
		// supplier part number, for the list's text search, comes from a hand-written migration:
		// drizzle-kit has no FULLTEXT indexes.)
		index('parts_updated_idx').on(t.updatedAt),
		// Covers the default view (not archived, by SKU) down to deep pages: the list reads ids from it. Its first
		// column also serves every other archived / not archived condition (a separate index on archived_at was
		// dropped: one index less to write for each imported part).
		index('parts_archived_sku_idx').on(t.archivedAt, t.sku)
	]
);

/** A part's surfaces in catalogue order; thickness and material describe the medium after the surface. */
export const partSurfaces = mysqlTable(
	'part_surfaces',
	{
		id: id(),
		partId: ref('part_id')
			.notNull()
			.references(() => parts.id, { onDelete: 'cascade' }),
		position: int('position').notNull(),
		/** Null for a flat surface. Positive when the centre of curvature lies to the right. */
		radiusMm: double('radius_mm'),
		thicknessMm: double('thickness_mm'),
		materialCode: varchar('material_code', { length: 32 })
	},
	(t) => [uniqueIndex('part_surfaces_part_pos_uq').on(t.partId, t.position)]
);

export const measurements = mysqlTable(
	'measurements',
	{
		id: id(),
		partId: ref('part_id')
			.notNull()
			.references(() => parts.id, { onDelete: 'cascade' }),
		eflMm: double('efl_mm').notNull(),
		wavelengthNm: double('wavelength_nm').notNull(),
		uncertaintyMm: double('uncertainty_mm'),
		method: varchar('method', { length: 120 }),
		measuredAt: datetime('measured_at').notNull(),
		measuredBy: ref('measured_by').references(() => users.id),
		note: text('note'),
		createdAt: timestamp('created_at').notNull().defaultNow()
	},
	(t) => [index('measurements_part_idx').on(t.partId, t.measuredAt)]
);

/** Lab settings (default wavelength and the like), one JSON value per key. */
export const settings = mysqlTable('settings', {
	key: varchar('key', { length: 64 }).primaryKey(),
	value: json('value').notNull()
});

export type Part = typeof parts.$inferSelect;
export type NewPart = typeof parts.$inferInsert;
export type PartSurface = typeof partSurfaces.$inferSelect;
export type Material = typeof materials.$inferSelect;
export type Measurement = typeof measurements.$inferSelect;
