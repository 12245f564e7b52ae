/** OpenAPI paths of the catalogue and stock: parts, measurements, movements, stock operations, locations, reservations. */
import { z } from 'zod';
import { CONDITIONS, MOVEMENT_KINDS } from '$lib/server/db/schema';
import { PART_FIELDS, PART_KINDS, type PartField, type PartFieldType } from '$lib/catalogue/part-fields';
import { partInputSchema, partPatchSchema, PURCHASING_FIELDS } from '$lib/server/catalogue/part-input';
import { listQuerySchema } from '$lib/server/catalogue/list';
import { measurementInputSchema } from '$lib/server/catalogue/measurements';
import { adjustSchema, conditionSchema, issueSchema, movementQuerySchema, moveSchema, receiveSchema, returnSchema, scrapSchema } from '$lib/server/stock/operations';
import { locationInputSchema, locationPatchSchema, stockQuerySchema } from '$lib/server/stock/locations';
import { reservationInputSchema, reservationQuerySchema } from '$lib/server/stock/reservations';
import { labMaterialInputSchema } from '$lib/server/catalogue/lab-materials';
import { errors, jsonBody, jsonResponse, queryParams, type OpenApiPaths } from './build';

const int = z.number().int();
const nint = int.nullable();
const nnum = z.number().nullable();
const nstr = z.string().nullable();
const dateTime = z.string().meta({ format: 'date-time' });

const surface = z.object({
	radiusMm: nnum.describe('mm, + when the centre of curvature lies to the right; null = flat'),
	thicknessMm: z.number().optional().describe('the medium after the surface; the last surface has none'),
	material: nstr.optional()
});

/** Part JSON's shape of a descriptor field: its type, null when it may be empty, the descriptor's note. */
function fieldJson(f: PartField): z.ZodType {
	const types: Record<PartFieldType, z.ZodType> = { text: z.string(), kind: z.enum(PART_KINDS), number: z.number(), integer: int, surfaces: z.array(surface) };
	const type = f.optional ? types[f.type].nullable() : types[f.type];
	return f.note ? type.describe(f.note) : type;
}

export const partJson = z.looseObject({
	id: int,
	...Object.fromEntries(PART_FIELDS.map((f) => [f.name, fieldJson(f)])),
	onHand: int.describe('usable units in all locations'),
	available: int.describe('on hand − active unexpired reservations'),
	coatingBandNm: z
		.object({ minNm: z.number(), maxNm: z.number() })
		.nullable()
		.describe('coating band read from `coating`: "AR 400–700 nm" → 400–700; one wavelength ("V-coat 1064 nm") → ±2 %; null when the text names no wavelength'),
	measured: z.object({ eflMm: z.number(), wavelengthNm: z.number(), uncertaintyMm: nnum, measuredAt: dateTime }).nullable(),
	computed: z
		.object({ eflMm: nnum, source: z.enum(['prescription', 'nominal', 'measured']).nullable(), wavelengthNm: z.number() })
		.describe('EFL at the lab default wavelength, used for sorting and filtering'),
	archived: z.boolean(),
	updatedAt: dateTime
});

const place = z.object({ locationId: int, code: z.string(), condition: z.enum(CONDITIONS) }).nullable();
export const movementJson = z.looseObject({
	id: int,
	kind: z.enum(MOVEMENT_KINDS),
	partId: int,
	sku: z.string(),
	quantity: int,
	from: place,
	to: place,
	userId: int,
	userName: z.string(),
	issuedTo: nstr,
	projectId: nint,
	reason: nstr,
	note: nstr,
	at: dateTime
});

const materialJson = z.looseObject({
	code: z.string(),
	name: z.string(),
	origin: z.enum(['open', 'lab', 'glass-code']),
	formula: z.enum(['sellmeier', 'cauchy', 'glass-code']),
	coefficients: z.looseObject({}).describe('Sellmeier { b, c } (c in µm²), Cauchy { terms }, glass code { nd, vd }'),
	minNm: z.number(),
	maxNm: z.number(),
	source: z.string(),
	nd: nnum,
	vd: nnum
});

const locationJson = z.looseObject({
	id: int,
	code: z.string().describe('cabinet/drawer/bin path, e.g. A1-D2-B04'),
	name: z.string(),
	archived: z.boolean()
});
export const reservationJson = z.looseObject({
	id: int,
	partId: int,
	sku: z.string(),
	userId: int,
	projectId: nint,
	quantity: int,
	until: dateTime,
	status: z.enum(['active', 'released', 'fulfilled']),
	state: z.enum(['active', 'expired', 'released', 'fulfilled'])
});
const items = (item: z.ZodType) => z.looseObject({ items: z.array(item) });

const op = (summary: string, schema: z.ZodType, who: string) => ({
	post: {
		summary,
		description: `${who}. Writes the stock change and one ledger row in one transaction.`,
		requestBody: jsonBody(schema),
		responses: { '201': jsonResponse('The movement written to the ledger', movementJson), ...errors(400, 401, 403, 404, 409, 415) }
	}
});

export const cataloguePaths: OpenApiPaths = {
	'/parts': {
		get: {
			summary: 'The catalogue, filtered, sorted and paged',
			parameters: queryParams(listQuerySchema, {
				q: 'words in any order: text in SKU, name, supplier part number, coating, material, kind; a number as EFL or diameter',
				kind: 'one kind or a comma-separated list',
				eflMin: 'mm, on the EFL at the default wavelength',
				material: 'code of the first glass',
				available: 'true: only parts with available units'
			}),
			responses: {
				'200': jsonResponse('One page', z.looseObject({ items: z.array(partJson), total: int, page: int, pageSize: int })),
				...errors(400, 401)
			}
		},
		post: {
			summary: 'Create a part (admin, stockroom)',
			requestBody: jsonBody(partInputSchema),
			responses: { '201': jsonResponse('The part', partJson), ...errors(400, 401, 403, 409, 415) }
		}
	},
	'/parts/{id}': {
		get: { summary: 'One part', responses: { '200': jsonResponse('The part', partJson), ...errors(401, 404) } },
		patch: {
			summary: 'Change some fields of a part',
			description:
				`Admin and stockroom may change any field; a purchaser only ${PURCHASING_FIELDS.join(', ')} (else 403). \`surfaces\` replaces all surfaces.`,
			requestBody: jsonBody(partPatchSchema),
			responses: { '200': jsonResponse('The part', partJson), ...errors(400, 401, 403, 404, 409, 415) }
		},
		delete: {
			summary: 'Archive a part (deleted outright only when it never had stock or history)',
			responses: { '200': jsonResponse('Outcome', z.object({ id: int, outcome: z.enum(['archived', 'deleted']) })), ...errors(401, 403, 404) }
		}
	},
	'/parts/{id}/measurements': {
		get: { summary: 'Measurements of a part, newest first', responses: { '200': jsonResponse('Measurements'), ...errors(401, 404) } },
		post: {
			summary: 'Record a measured EFL (admin, stockroom); the latest one is what the solver uses',
			requestBody: jsonBody(measurementInputSchema),
			responses: { '201': jsonResponse('The measurement'), ...errors(400, 401, 403, 404, 415) }
		}
	},
	'/parts/{id}/movements': {
		get: {
			summary: 'The ledger of a part, newest first',
			parameters: queryParams(movementQuerySchema),
			responses: { '200': jsonResponse('Movements', z.looseObject({ items: z.array(movementJson), limit: int, offset: int })), ...errors(401, 404) }
		}
	},
	'/stock': {
		get: { summary: 'Stock rows by location', parameters: queryParams(stockQuerySchema), responses: { '200': jsonResponse('Stock rows'), ...errors(400, 401) } }
	},
	'/stock/receive': op('Receive units into a location', receiveSchema, 'Admin, stockroom'),
	'/stock/move': op('Move units between locations', moveSchema, 'Admin, stockroom'),
	'/stock/issue': op(
		'Issue usable units to a person or project',
		issueSchema,
		"Admin, stockroom, engineer. Never takes units reserved by others (409); the issuer's own reservations are fulfilled first"
	),
	'/stock/return': op('Return issued units', returnSchema, 'Admin, stockroom, engineer. At most the units that went out (409)'),
	'/stock/adjust': op('Correct a count by a signed delta', adjustSchema, 'Admin, stockroom'),
	'/stock/scrap': op('Scrap units', scrapSchema, 'Admin, stockroom'),
	'/stock/condition': op('Change the condition of units in place', conditionSchema, 'Admin, stockroom'),
	'/materials': {
		get: {
			summary: "Every material with its dispersion formula, valid range and source: open (built in), the lab's own, glass codes",
			responses: { '200': jsonResponse('Materials', items(materialJson)), ...errors(401) }
		},
		post: {
			summary: 'Add a lab material from a datasheet (admin): Sellmeier b and c (µm²), or Cauchy terms [A, B, …] (λ in µm), its range and source',
			requestBody: jsonBody(labMaterialInputSchema),
			responses: { '201': jsonResponse('The material', materialJson), ...errors(400, 401, 403, 409, 415) }
		}
	},
	'/locations': {
		get: {
			summary: 'Storage locations',
			parameters: [{ name: 'archived', in: 'query', required: false, schema: { type: 'string', enum: ['include'] } }],
			responses: { '200': jsonResponse('Locations', items(locationJson)), ...errors(401) }
		},
		post: {
			summary: 'Create a location (admin, stockroom)',
			requestBody: jsonBody(locationInputSchema),
			responses: { '201': jsonResponse('The location', locationJson), ...errors(400, 401, 403, 409, 415) }
		}
	},
	'/locations/{id}': {
		get: { summary: 'One location with its stock', responses: { '200': jsonResponse('The location', locationJson), ...errors(401, 404) } },
		patch: {
			summary: 'Rename, archive or restore a location (admin, stockroom); only an empty one can be archived',
			requestBody: jsonBody(locationPatchSchema),
			responses: { '200': jsonResponse('The location', locationJson), ...errors(400, 401, 403, 404, 409, 415) }
		}
	},
	'/reservations': {
		get: {
			summary: 'Reservations',
			parameters: queryParams(reservationQuerySchema),
			responses: { '200': jsonResponse('Reservations', items(reservationJson)), ...errors(400, 401) }
		},
		post: {
			summary: 'Reserve units of a part for a project until a date (admin, stockroom, engineer)',
			requestBody: jsonBody(reservationInputSchema),
			responses: { '201': jsonResponse('The reservation', reservationJson), ...errors(400, 401, 403, 404, 409, 415) }
		}
	},
	'/reservations/{id}': {
		delete: { summary: 'Release a reservation (its owner, or admin/stockroom)', responses: { '200': jsonResponse('Released'), ...errors(401, 403, 404, 409) } }
	}
};
