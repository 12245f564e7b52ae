/**
 * The catalogue's public face: what other areas (the importer first) may use of parts, their input
 * schema, derived optics columns, the list's filters and the lab's settings. Modules of this folder
 * are its internals; code outside reads the catalogue through `$lib/server/catalogue`
 * (`tests/unit/foundation/boundaries.test.ts` holds the importer to it).
 */
export { partInputSchema, partPatchSchema, partFieldsSchema, PURCHASING_FIELDS, toSurfaceSpecs } from './part-input';
export type { PartInput, PartPatch } from './part-input';
export {
	archivePart,
	columnsOf,
	PART_COLUMNS,
	createPart,
	findPartIdBySku,
	getPart,
	getPartJson,
	PartNotFound,
	refreshDerived,
	restorePart,
	toInput,
	updatePart,
	type Actor,
	type PartRecord
} from './parts';
export { partsJson, toPartJson, type PartJson } from './part-json';
export { computeDerived, paraxialColumns, type MeasuredEfl, type OpticsPart } from './derived';
export { listConditions, listParts, listQuerySchema, SORTS, type ListQuery } from './list';
export { syncLabMaterials } from './lab-materials';
export { getDefaultWavelengthNm } from './settings';
