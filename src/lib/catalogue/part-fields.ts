/**
 * The one descriptor of a part's fields: name, type, unit, label, CSV header words, default and who
 * may edit each. Everything that lists the fields reads this table: the input schema
 * (`server/catalogue/part-input.ts`, whose zod checks are typed by these names), the part form
 * (`PartForm.svelte`) and its reader (`server/catalogue/forms.ts`), the parts row
 * (`columnsOf` / `toInput`), the CSV import mapping and export header (`server/imports/fields.ts`)
 * and the API description (`server/api/openapi/catalogue.ts`). `tests/unit/catalogue/part-fields.test.ts`
 * fails when one of them lists other fields.
 *
 * Pure: no framework, database or DOM imports, so the browser component reads it too.
 * To add a field: add its row here (in Part JSON / CSV column order), its zod check in
 * `part-input.ts` (the compiler asks for it), its column in the schema and a migration.
 */
// Relative imports: the database schema takes PART_KINDS from here, and drizzle-kit reads it without Vite's aliases.
import { PART_PATCHERS, STOCK_EDITORS, type Role } from '../roles';
import { DEFAULT_WAVELENGTH_NM } from '../optics/materials';

/** Kinds of catalogue part; each fills a sensible surface template in the part form. */
export const PART_KINDS = [
	'plano-convex',
	'biconvex',
	'plano-concave',
	'biconcave',
	'positive-meniscus',
	'negative-meniscus',
	'achromatic-doublet',
	'other'
] as const;
export type PartKind = (typeof PART_KINDS)[number];

/** Surfaces a part may have (the schema, the form's editor and a CSV row). */
export const MAX_SURFACES = 12;

/** The CSV columns of surface `k` (1-based): radius, thickness and material after it. */
export const surfaceColumns = (k: number) => [`r${k}Mm`, `t${k}Mm`, `material${k}`] as const;

/**
 * `text`: a string; `kind`: one of `PART_KINDS`; `number` / `integer`: a number (whole for integer);
 * `surfaces`: the prescription (its own editor in the form, flattened columns in a CSV).
 */
export type PartFieldType = 'text' | 'kind' | 'number' | 'integer' | 'surfaces';
/** `currency`: units of the part's currency (38.50), stored as cents. */
export type PartFieldUnit = 'mm' | 'nm' | 'days' | 'currency';

export interface PartFieldSpec {
	type: PartFieldType;
	unit?: PartFieldUnit;
	/** The form's label, without the unit (the unit is added: "Diameter (mm)"). */
	label: string;
	/** The import mapping screen's label, where it differs from the form's label with its unit. */
	mappingLabel?: string;
	/** Must be given (no default): the form marks it required. */
	required?: boolean;
	/** May be empty (null): an emptied form field clears it, a blank CSV cell too. */
	optional?: boolean;
	/** The value a new part takes when the field is left out (form, API, blank CSV cell). */
	default?: unknown;
	/** Longest text (zod's check and the form's maxlength). */
	maxLength?: number;
	/** CSV header words meaning this field besides its own name (compared lower case, letters and digits only). */
	headers?: readonly string[];
	/** Who may change it (a PATCH naming a field outside the role's fields is 403). */
	editors: readonly Role[];
	/** Where the part form shows it. */
	section: 'part' | 'supply';
	/** A note for the API description. */
	note?: string;
	/** Form presentation: placeholder, wide cell, several lines, drawn in another field's cell. */
	placeholder?: string;
	wide?: boolean;
	multiline?: boolean;
	shownWith?: string;
}

/** The fields, in Part JSON and CSV column order. */
export const PART_FIELD = {
	sku: { type: 'text', label: 'SKU', required: true, maxLength: 40, headers: ['stockcode', 'ourcode', 'internalcode'], editors: STOCK_EDITORS, section: 'part' },
	name: {
		type: 'text',
		label: 'Name',
		required: true,
		maxLength: 200,
		headers: ['description', 'title', 'productname'],
		editors: STOCK_EDITORS,
		section: 'part',
		wide: true
	},
	kind: { type: 'kind', label: 'Kind', required: true, headers: ['type', 'lenstype', 'shape'], editors: STOCK_EDITORS, section: 'part' },
	diameterMm: {
		type: 'number',
		unit: 'mm',
		label: 'Diameter',
		required: true,
		headers: ['diameter', 'dia', 'od', 'outerdiameter'],
		editors: STOCK_EDITORS,
		section: 'part'
	},
	clearApertureMm: {
		type: 'number',
		unit: 'mm',
		label: 'Clear aperture',
		optional: true,
		headers: ['clearaperture', 'ca'],
		editors: STOCK_EDITORS,
		section: 'part',
		note: 'null = 90 % of the diameter',
		placeholder: '90 % of Ø'
	},
	surfaces: { type: 'surfaces', label: 'Surfaces', default: [], editors: STOCK_EDITORS, section: 'part' },
	eflMm: {
		type: 'number',
		unit: 'mm',
		label: 'Datasheet EFL',
		mappingLabel: 'EFL (datasheet)',
		optional: true,
		headers: ['efl', 'focallength', 'effectivefocallength', 'f'],
		editors: STOCK_EDITORS,
		section: 'part',
		note: 'datasheet EFL at designWavelengthNm'
	},
	bflMm: {
		type: 'number',
		unit: 'mm',
		label: 'Datasheet BFL',
		mappingLabel: 'BFL (datasheet)',
		optional: true,
		headers: ['bfl', 'backfocallength'],
		editors: STOCK_EDITORS,
		section: 'part'
	},
	centerThicknessMm: {
		type: 'number',
		unit: 'mm',
		label: 'Centre thickness',
		mappingLabel: 'Centre thickness (no prescription)',
		optional: true,
		headers: ['centerthickness', 'centrethickness', 'ct'],
		editors: STOCK_EDITORS,
		section: 'part'
	},
	designWavelengthNm: {
		type: 'number',
		unit: 'nm',
		label: 'Design wavelength',
		default: DEFAULT_WAVELENGTH_NM,
		headers: ['designwavelength', 'wavelength'],
		editors: STOCK_EDITORS,
		section: 'part'
	},
	coating: {
		type: 'text',
		label: 'Coating',
		optional: true,
		maxLength: 80,
		headers: ['arcoating'],
		editors: STOCK_EDITORS,
		section: 'part',
		placeholder: 'AR 400–700 nm'
	},
	supplier: { type: 'text', label: 'Supplier', optional: true, maxLength: 120, headers: ['vendor', 'manufacturer'], editors: PART_PATCHERS, section: 'supply' },
	supplierPartNumber: {
		type: 'text',
		label: 'Supplier part number',
		optional: true,
		maxLength: 80,
		headers: ['partnumber', 'partno', 'pn', 'catalognumber', 'cataloguenumber', 'itemnumber', 'itemno', 'article'],
		editors: PART_PATCHERS,
		section: 'supply'
	},
	unitPrice: {
		type: 'number',
		unit: 'currency',
		label: 'Unit price',
		optional: true,
		headers: ['unitpriceminor', 'price'],
		editors: PART_PATCHERS,
		section: 'supply',
		note: 'currency units of `currency`, at most two decimals (38.50); the same in the CSV export and import',
		placeholder: '38.50'
	},
	currency: { type: 'text', label: 'Currency', default: 'EUR', maxLength: 3, editors: PART_PATCHERS, section: 'supply', note: 'ISO 4217', shownWith: 'unitPrice' },
	leadTimeDays: { type: 'integer', unit: 'days', label: 'Lead time', optional: true, headers: ['leadtime'], editors: PART_PATCHERS, section: 'supply' },
	reorderPoint: { type: 'integer', label: 'Reorder point', default: 0, editors: PART_PATCHERS, section: 'supply' },
	reorderQuantity: { type: 'integer', label: 'Reorder quantity', default: 0, editors: PART_PATCHERS, section: 'supply' },
	notes: { type: 'text', label: 'Notes', optional: true, maxLength: 5000, headers: ['comment', 'remarks'], editors: STOCK_EDITORS, section: 'supply', multiline: true }
} as const satisfies Record<string, PartFieldSpec>;

export type PartFieldName = keyof typeof PART_FIELD;
/** One field of the descriptor with its name. */
export type PartField = PartFieldSpec & { name: PartFieldName };

/** Every field, in Part JSON / CSV order. */
export const PART_FIELDS: readonly PartField[] = (Object.keys(PART_FIELD) as PartFieldName[]).map((name) => ({ name, ...(PART_FIELD[name] as PartFieldSpec) }));
export const PART_FIELD_NAMES: readonly PartFieldName[] = PART_FIELDS.map((f) => f.name);

/** Fields that take a default when left out, by name. */
export type DefaultedPartField = { [K in PartFieldName]: (typeof PART_FIELD)[K] extends { default: unknown } ? K : never }[PartFieldName];

/** The fields other than the surfaces: one cell each in a CSV, one input each in the form. */
export const SCALAR_PART_FIELDS = PART_FIELDS.filter((f) => f.type !== 'surfaces');
export type ScalarPartFieldName = Exclude<PartFieldName, 'surfaces'>;

export const isNumericType = (t: PartFieldType) => t === 'number' || t === 'integer';

/** The fields a role may change. */
export const partFieldsEditableBy = (role: Role | null | undefined): PartFieldName[] =>
	PART_FIELDS.filter((f) => !!role && f.editors.includes(role)).map((f) => f.name);

/** The unit as the form's label writes it after the label ("(mm)"); the price says it in a hint instead. */
export function unitSuffix(unit: PartFieldUnit | undefined): string {
	return unit && unit !== 'currency' ? ` (${unit})` : '';
}

/** The form's label with its unit: "Diameter (mm)", "Lead time (days)", "Unit price". */
export const formLabel = (f: PartFieldSpec): string => f.label + unitSuffix(f.unit);

/** The import mapping screen's label (lengths and prices get their unit chosen beside it). */
export const mappingLabel = (f: PartFieldSpec): string => f.mappingLabel ?? (f.unit === 'mm' || f.unit === 'currency' ? f.label : formLabel(f));
