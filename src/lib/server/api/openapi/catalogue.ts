/** OpenAPI paths of the catalogue and stock: parts, measurements, movements, stock operations, locations, reservations. */
import type { OpenApiPaths } from './types';
import { errors, jsonBody, jsonResponse } from './types';

const num = { type: 'number' };
const nnum = { type: ['number', 'null'] };
const nstr = { type: ['string', 'null'] };
const int = { type: 'integer' };
const condition = { type: 'string', enum: ['usable', 'quarantine', 'damaged'] };

const surface = {
	type: 'object',
	description: '`thicknessMm` and `material` describe the medium after the surface; the last surface has neither.',
	required: ['radiusMm'],
	properties: { radiusMm: { ...nnum, description: 'mm, + when the centre of curvature lies to the right; null = flat' }, thicknessMm: num, material: nstr }
};

const partFields = {
	sku: { type: 'string' },
	name: { type: 'string' },
	kind: { type: 'string', enum: ['plano-convex', 'biconvex', 'plano-concave', 'biconcave', 'positive-meniscus', 'negative-meniscus', 'achromatic-doublet', 'other'] },
	diameterMm: num,
	clearApertureMm: { ...nnum, description: 'null = 90 % of the diameter' },
	surfaces: { type: 'array', items: surface },
	eflMm: { ...nnum, description: 'datasheet EFL at designWavelengthNm' },
	bflMm: nnum,
	centerThicknessMm: nnum,
	designWavelengthNm: num,
	coating: nstr,
	supplier: { ...nstr, description: 'supplier name (a new name creates the supplier)' },
	supplierPartNumber: nstr,
	unitPrice: { type: ['number', 'null'], multipleOf: 0.01, minimum: 0, description: 'currency units of `currency`, at most two decimals (38.50); the same in the CSV export and import' },
	currency: { type: 'string', description: 'ISO 4217' },
	leadTimeDays: { type: ['integer', 'null'] },
	reorderPoint: int,
	reorderQuantity: int,
	notes: nstr
};

const partInput = { type: 'object', additionalProperties: false, required: ['sku', 'name', 'kind', 'diameterMm'], properties: partFields };

const part = {
	type: 'object',
	properties: {
		id: int,
		...partFields,
		coatingBandNm: {
			type: ['object', 'null'],
			properties: { minNm: num, maxNm: num },
			description: 'coating band read from `coating`: "AR 400–700 nm" → 400–700; one wavelength ("V-coat 1064 nm") → ±2 %; null when the text names no wavelength'
		},
		onHand: { ...int, description: 'usable units in all locations' },
		available: { ...int, description: 'on hand − active unexpired reservations' },
		measured: {
			type: ['object', 'null'],
			properties: { eflMm: num, wavelengthNm: num, uncertaintyMm: nnum, measuredAt: { type: 'string', format: 'date-time' } }
		},
		computed: {
			type: 'object',
			description: 'EFL at the lab default wavelength, used for sorting and filtering',
			properties: { eflMm: nnum, source: { type: ['string', 'null'], enum: ['prescription', 'nominal', 'measured', null] }, wavelengthNm: num }
		},
		archived: { type: 'boolean' },
		updatedAt: { type: 'string', format: 'date-time' }
	}
};

const place = { type: ['object', 'null'], properties: { locationId: int, code: { type: 'string' }, condition } };
const movement = {
	type: 'object',
	properties: {
		id: int,
		kind: { type: 'string', enum: ['receive', 'move', 'issue', 'return', 'adjust', 'scrap', 'condition'] },
		partId: int,
		sku: { type: 'string' },
		quantity: int,
		from: place,
		to: place,
		userId: int,
		userName: { type: 'string' },
		issuedTo: nstr,
		projectId: { type: ['integer', 'null'] },
		reason: nstr,
		note: nstr,
		at: { type: 'string', format: 'date-time' }
	}
};

const location = { type: 'object', properties: { id: int, code: { type: 'string', description: 'cabinet/drawer/bin path, e.g. A1-D2-B04' }, name: { type: 'string' }, archived: { type: 'boolean' } } };
const reservation = {
	type: 'object',
	properties: {
		id: int,
		partId: int,
		sku: { type: 'string' },
		userId: int,
		projectId: { type: ['integer', 'null'] },
		quantity: int,
		until: { type: 'string', format: 'date-time' },
		status: { type: 'string', enum: ['active', 'released', 'fulfilled'] },
		state: { type: 'string', enum: ['active', 'expired', 'released', 'fulfilled'] }
	}
};

const idParam = [{ name: 'id', in: 'path', required: true, schema: int }];
const q = (name: string, schema: unknown, description?: string) => ({ name, in: 'query', required: false, schema, description });

const material = {
	type: 'object',
	properties: {
		code: { type: 'string' },
		name: { type: 'string' },
		origin: { type: 'string', enum: ['open', 'lab', 'glass-code'] },
		formula: { type: 'string', enum: ['sellmeier', 'cauchy', 'glass-code'] },
		coefficients: { type: 'object', description: 'Sellmeier { b, c } (c in µm²), Cauchy { terms }, glass code { nd, vd }' },
		minNm: num,
		maxNm: num,
		source: { type: 'string' },
		nd: nnum,
		vd: nnum
	}
};
const body = (required: string[], properties: Record<string, unknown>) => jsonBody({ type: 'object', additionalProperties: false, required, properties });
const common = { partId: int, quantity: { ...int, minimum: 1 }, note: nstr };

const op = (summary: string, required: string[], properties: Record<string, unknown>, who: string) => ({
	post: {
		summary,
		description: `${who}. Writes the stock change and one ledger row in one transaction.`,
		requestBody: body(required, properties),
		responses: { '201': jsonResponse('The movement written to the ledger', movement), ...errors(400, 401, 403, 404, 409, 415) }
	}
});

export const cataloguePaths: OpenApiPaths = {
	'/parts': {
		get: {
			summary: 'The catalogue, filtered, sorted and paged',
			parameters: [
				q('q', { type: 'string' }, 'text in SKU (prefix), name, supplier part number (prefix)'),
				q('kind', { type: 'string' }, 'one kind or a comma-separated list'),
				q('eflMin', num, 'mm, on the EFL at the default wavelength'),
				q('eflMax', num),
				q('diameterMin', num),
				q('diameterMax', num),
				q('material', { type: 'string' }, 'code of the first glass'),
				q('coating', { type: 'string' }),
				q('available', { type: 'string', enum: ['true', 'false'] }, 'true: only parts with available units'),
				q('archived', { type: 'string', enum: ['exclude', 'include', 'only'] }),
				q('sort', { type: 'string', enum: ['sku', 'name', 'kind', 'eflMm', 'diameterMm', 'material', 'coating', 'updatedAt'] }),
				q('order', { type: 'string', enum: ['asc', 'desc'] }),
				q('page', { type: 'integer', minimum: 1 }),
				q('pageSize', { type: 'integer', minimum: 1, maximum: 200 })
			],
			responses: {
				'200': jsonResponse('One page', { type: 'object', properties: { items: { type: 'array', items: part }, total: int, page: int, pageSize: int } }),
				...errors(400, 401)
			}
		},
		post: { summary: 'Create a part (admin, stockroom)', requestBody: jsonBody(partInput), responses: { '201': jsonResponse('The part', part), ...errors(400, 401, 403, 409, 415) } }
	},
	'/parts/{id}': {
		get: { summary: 'One part', parameters: idParam, responses: { '200': jsonResponse('The part', part), ...errors(401, 404) } },
		patch: {
			summary: 'Change some fields of a part',
			description: 'Admin and stockroom may change any field; a purchaser only supplier, supplierPartNumber, unitPrice, currency, leadTimeDays, reorderPoint, reorderQuantity (else 403). `surfaces` replaces all surfaces.',
			parameters: idParam,
			requestBody: jsonBody({ ...partInput, required: [] }),
			responses: { '200': jsonResponse('The part', part), ...errors(400, 401, 403, 404, 409, 415) }
		},
		delete: {
			summary: 'Archive a part (deleted outright only when it never had stock or history)',
			parameters: idParam,
			responses: { '200': jsonResponse('Outcome', { type: 'object', properties: { id: int, outcome: { type: 'string', enum: ['archived', 'deleted'] } } }), ...errors(401, 403, 404) }
		}
	},
	'/parts/{id}/measurements': {
		get: { summary: 'Measurements of a part, newest first', parameters: idParam, responses: { '200': jsonResponse('Measurements'), ...errors(401, 404) } },
		post: {
			summary: 'Record a measured EFL (admin, stockroom); the latest one is what the solver uses',
			parameters: idParam,
			requestBody: body(['eflMm', 'wavelengthNm'], { eflMm: num, wavelengthNm: num, uncertaintyMm: nnum, method: nstr, measuredAt: { type: 'string', format: 'date-time' }, note: nstr }),
			responses: { '201': jsonResponse('The measurement'), ...errors(400, 401, 403, 404, 415) }
		}
	},
	'/parts/{id}/movements': {
		get: {
			summary: 'The ledger of a part, newest first',
			parameters: [...idParam, q('limit', { type: 'integer', maximum: 500 }), q('offset', int)],
			responses: { '200': jsonResponse('Movements', { type: 'object', properties: { items: { type: 'array', items: movement } } }), ...errors(401, 404) }
		}
	},
	'/stock': {
		get: {
			summary: 'Stock rows by location',
			parameters: [q('locationId', int), q('partId', int)],
			responses: { '200': jsonResponse('Stock rows'), ...errors(400, 401) }
		}
	},
	'/stock/receive': op('Receive units into a location', ['partId', 'quantity', 'locationId'], { ...common, locationId: int, condition }, 'Admin, stockroom'),
	'/stock/move': op('Move units between locations', ['partId', 'quantity', 'fromLocationId', 'toLocationId'], { ...common, fromLocationId: int, toLocationId: int, condition }, 'Admin, stockroom'),
	'/stock/issue': op(
		'Issue usable units to a person or project',
		['partId', 'quantity', 'locationId'],
		{ ...common, locationId: int, issuedTo: nstr, projectId: { type: ['integer', 'null'] }, reservationId: { type: ['integer', 'null'] } },
		"Admin, stockroom, engineer. Never takes units reserved by others (409); the issuer's own reservations are fulfilled first"
	),
	'/stock/return': op('Return issued units', ['partId', 'quantity', 'locationId'], { ...common, locationId: int, condition, issuedTo: nstr, projectId: { type: ['integer', 'null'] } }, 'Admin, stockroom, engineer'),
	'/stock/adjust': op('Correct a count by a signed delta', ['partId', 'locationId', 'delta', 'reason'], { partId: int, locationId: int, condition, delta: int, reason: { type: 'string' }, note: nstr }, 'Admin, stockroom'),
	'/stock/scrap': op('Scrap units', ['partId', 'quantity', 'locationId'], { ...common, locationId: int, condition, reason: nstr }, 'Admin, stockroom'),
	'/stock/condition': op('Change the condition of units in place', ['partId', 'quantity', 'locationId', 'from', 'to'], { ...common, locationId: int, from: condition, to: condition }, 'Admin, stockroom'),
	'/locations': {
		get: { summary: 'Storage locations', parameters: [q('archived', { type: 'string', enum: ['include'] })], responses: { '200': jsonResponse('Locations', { type: 'object', properties: { items: { type: 'array', items: location } } }), ...errors(401) } },
		post: { summary: 'Create a location (admin, stockroom)', requestBody: body(['code', 'name'], { code: { type: 'string' }, name: { type: 'string' } }), responses: { '201': jsonResponse('The location', location), ...errors(400, 401, 403, 409, 415) } }
	},
	'/materials': {
		get: {
			summary: 'Every material with its dispersion formula, valid range and source: open (built in), the lab\'s own, glass codes',
			responses: { '200': jsonResponse('Materials', { type: 'object', properties: { items: { type: 'array', items: material } } }), ...errors(401) }
		},
		post: {
			summary: 'Add a lab material from a datasheet (admin): Sellmeier b and c (µm²), or Cauchy terms [A, B, …] (λ in µm), its range and source',
			requestBody: body(['formula', 'code', 'name', 'minNm', 'maxNm', 'source'], {
				formula: { type: 'string', enum: ['sellmeier', 'cauchy'] },
				code: { type: 'string', description: 'what a part surface names; not an open material or a glass code' },
				name: { type: 'string' },
				b: { type: 'array', items: num, description: 'Sellmeier B coefficients (1 to 6)' },
				c: { type: 'array', items: num, description: 'Sellmeier C coefficients in µm², as many as B' },
				terms: { type: 'array', items: num, description: 'Cauchy A, B, C, … (2 to 5), λ in µm' },
				minNm: num,
				maxNm: num,
				source: { type: 'string', description: 'supplier, datasheet, edition or date' }
			}),
			responses: { '201': jsonResponse('The material', material), ...errors(400, 401, 403, 409, 415) }
		}
	},
	'/locations/{id}': {
		get: { summary: 'One location with its stock', parameters: idParam, responses: { '200': jsonResponse('The location', location), ...errors(401, 404) } },
		patch: {
			summary: 'Rename, archive or restore a location (admin, stockroom); only an empty one can be archived',
			parameters: idParam,
			requestBody: body([], { code: { type: 'string' }, name: { type: 'string' }, archived: { type: 'boolean' } }),
			responses: { '200': jsonResponse('The location', location), ...errors(400, 401, 403, 404, 409, 415) }
		}
	},
	'/reservations': {
		get: { summary: 'Reservations', parameters: [q('partId', int), q('mine', { type: 'string', enum: ['true', 'false'] }), q('active', { type: 'string', enum: ['true', 'false'] })], responses: { '200': jsonResponse('Reservations', { type: 'object', properties: { items: { type: 'array', items: reservation } } }), ...errors(400, 401) } },
		post: {
			summary: 'Reserve units of a part for a project until a date (admin, stockroom, engineer)',
			requestBody: body(['partId', 'quantity', 'until'], { partId: int, quantity: int, until: { type: 'string', format: 'date-time' }, projectId: { type: ['integer', 'null'] }, note: nstr }),
			responses: { '201': jsonResponse('The reservation', reservation), ...errors(400, 401, 403, 404, 409, 415) }
		}
	},
	'/reservations/{id}': {
		delete: { summary: 'Release a reservation (its owner, or admin/stockroom)', parameters: idParam, responses: { '200': jsonResponse('Released'), ...errors(401, 403, 404, 409) } }
	}
};
