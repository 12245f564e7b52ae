/** OpenAPI paths of purchasing: the reorder board, its CSV export, unlocks, purchase requests. */
import type { OpenApiPaths } from './types';
import { errors, jsonBody, jsonResponse } from './types';

const int = { type: 'integer' };
const nint = { type: ['integer', 'null'] };
/** One unit per name: `unitPrice` is always currency units with at most two decimals. */
const price = { type: ['number', 'null'], multipleOf: 0.01, minimum: 0, description: 'currency units of `currency`, at most two decimals (38.50)' };
const nstr = { type: ['string', 'null'] };
const statuses = ['draft', 'requested', 'ordered', 'partly-received', 'received', 'closed', 'cancelled'];

const boardRow = {
	type: 'object',
	properties: {
		partId: int,
		sku: { type: 'string' },
		name: { type: 'string' },
		supplier: nstr,
		supplierPartNumber: nstr,
		unitPrice: price,
		currency: { type: 'string' },
		leadTimeDays: nint,
		reorderPoint: int,
		reorderQuantity: int,
		onHand: { ...int, description: 'usable units on hand (only these count)' },
		quarantine: { ...int, description: 'units waiting for inspection (not counted as on hand)' },
		damaged: { ...int, description: 'damaged units (not counted as on hand)' },
		reserved: int,
		available: int,
		usage90d: { ...int, description: 'issued + scrapped − returned over the last 90 days (ledger)' },
		onOrder: { ...int, description: 'units on open requests, not yet received' },
		suggestedQuantity: int,
		suggestion: { type: 'string', description: 'the arithmetic behind suggestedQuantity, in words' },
		flag: { type: ['string', 'null'], enum: ['reorder-point', 'over-reserved', null] },
		flaggedSince: { type: ['string', 'null'], format: 'date-time' },
		setupsUsing: int,
		setupsUnlocked: { ...int, description: 'saved setups not buildable now that buying this part alone would unlock' },
		unlocks: { type: 'array', items: { type: 'object', properties: { setupId: int, name: { type: 'string' }, missing: int } } }
	}
};

const request = {
	type: 'object',
	properties: {
		id: int,
		partId: int,
		sku: { type: 'string' },
		partName: { type: 'string' },
		supplier: nstr,
		status: { type: 'string', enum: statuses },
		quantity: int,
		receivedQuantity: int,
		unitPrice: price,
		currency: { type: 'string' },
		leadTimeDays: nint,
		orderReference: nstr,
		note: nstr,
		createdBy: { type: 'object', properties: { id: int, name: { type: 'string' } } },
		createdAt: { type: 'string', format: 'date-time' },
		updatedAt: { type: 'string', format: 'date-time' },
		allowedSteps: { type: 'array', items: { type: 'string', enum: statuses } },
		receivable: { type: 'boolean' }
	}
};

const event = {
	type: 'object',
	properties: {
		id: int,
		at: { type: 'string', format: 'date-time' },
		userId: int,
		userName: { type: 'string' },
		from: { type: ['string', 'null'], enum: [...statuses, null] },
		to: { type: 'string', enum: statuses },
		quantity: nint,
		locationId: nint,
		locationCode: nstr,
		movementId: { ...nint, description: 'the ledger movement a receipt wrote' },
		note: nstr
	}
};

const createInput = {
	type: 'object',
	additionalProperties: false,
	required: ['partId', 'quantity'],
	properties: {
		partId: int,
		quantity: { ...int, minimum: 1, maximum: 100000 },
		status: { type: 'string', enum: ['draft', 'requested'], default: 'draft' },
		unitPrice: { ...price, description: 'currency units (38.50); default: the part’s price' },
		note: nstr
	}
};

const offer = {
	type: 'object',
	properties: { partId: int, sku: { type: 'string' }, name: { type: 'string' }, quantity: int, unitPrice: price, currency: { type: 'string' }, supplier: nstr, leadTimeDays: nint }
};
const brief = {
	type: 'object',
	properties: {
		rank: int,
		skus: { type: 'array', items: { type: 'string' } },
		partIds: { type: 'array', items: int, description: 'in the order light meets them' },
		mode: { type: 'string', enum: ['imaging', 'beam', 'afocal'] },
		magnification: { type: ['number', 'null'], description: 'imaging only' },
		ratioToAiry: { type: ['number', 'null'], description: 'imaging: max(axial, edge) RMS spot over the Airy radius' },
		spotRmsMm: { type: ['number', 'null'] },
		airyRadiusMm: { type: ['number', 'null'] },
		objectDistanceMm: { type: 'number' },
		backDistanceMm: { type: 'number' },
		vignetted: { type: 'boolean' },
		efficiency: { type: ['number', 'null'], description: 'beam: overlap with the target beam, 0–1' },
		outputWaistDiameterMm: { type: ['number', 'null'], description: 'beam' },
		outputWaistPositionMm: { type: ['number', 'null'], description: 'beam, from z = 0' },
		expansion: { type: ['number', 'null'], description: 'afocal' },
		residualDivergenceMrad: { type: ['number', 'null'], description: 'afocal' },
		lengthMm: { type: ['number', 'null'], description: 'beam and afocal: first vertex to last vertex' }
	}
};
const shortPart = {
	allOf: [offer, { type: 'object', properties: { needed: int, available: { ...int, description: "available stock plus units the setup's own active reservations hold" } } }]
};

export const purchasingPaths: OpenApiPaths = {
	'/reorder': {
		get: {
			summary: 'Reorder board: flagged parts and parts whose purchase would unlock a saved setup (purchasers)',
			responses: { '200': jsonResponse('board', { type: 'object', properties: { items: { type: 'array', items: boardRow }, usageDays: int } }), ...errors(401, 403) }
		}
	},
	'/reorder/export.csv': {
		get: {
			summary: 'Selected board rows as a CSV for the supplier (purchasers)',
			parameters: [
				{ name: 'partId', in: 'query', required: true, schema: { type: 'array', items: int }, style: 'form', explode: true },
				{ name: 'qty-{partId}', in: 'query', required: false, schema: int, description: 'quantity to order instead of the suggestion' }
			],
			responses: {
				'200': {
					description: 'CSV (UTF-8 with BOM): sku, name, supplier, supplierPartNumber, quantity, unitPrice (currency units, 38.50), currency, leadTimeDays, onHand, available, reorderPoint',
					content: { 'text/csv': { schema: { type: 'string' } } }
				},
				...errors(400, 401, 403)
			}
		}
	},
	'/reorder/unlock': {
		post: {
			summary: 'Which single purchase gives the best setup, for a saved setup or a Build from stock question (searched with availableOnly: false)',
			requestBody: jsonBody({
				oneOf: [
					{ type: 'object', additionalProperties: false, required: ['setupId'], properties: { setupId: int } },
					{ type: 'object', additionalProperties: false, required: ['question'], properties: { question: { type: 'object', description: 'a POST /solve body' } } }
				]
			}),
			responses: {
				'200': jsonResponse('answer', {
					type: 'object',
					properties: {
						bestFromStock: { oneOf: [brief, { type: 'null' }] },
						purchase: { oneOf: [{ allOf: [offer, { type: 'object', properties: { solution: brief, betterThanStock: { type: 'boolean' } } }] }, { type: 'null' }] },
						setupBuildable: { type: 'boolean' },
						setupShort: { type: 'array', items: shortPart },
						stats: { type: 'object', properties: { solutionsSearched: int, elapsedMs: { type: 'number' } } }
					}
				}),
				...errors(400, 401, 404, 415, 429)
			}
		}
	},
	'/purchase-requests': {
		get: {
			summary: 'Purchase requests, newest change first (purchasers, stockroom)',
			parameters: [
				{ name: 'status', in: 'query', required: false, schema: { type: 'string', enum: statuses } },
				{ name: 'partId', in: 'query', required: false, schema: int },
				{ name: 'open', in: 'query', required: false, schema: { type: 'string', enum: ['true', 'false'] } }
			],
			responses: { '200': jsonResponse('requests', { type: 'object', properties: { items: { type: 'array', items: request } } }), ...errors(400, 401, 403) }
		},
		post: {
			summary: 'Creates a request, or several in one transaction with {items: [...]} (purchasers)',
			requestBody: jsonBody({ oneOf: [createInput, { type: 'object', additionalProperties: false, required: ['items'], properties: { items: { type: 'array', items: createInput } } }] }),
			responses: { '201': jsonResponse('the request, or {items}', request), ...errors(400, 401, 403, 409, 415) }
		}
	},
	'/purchase-requests/{id}': {
		get: {
			summary: 'One request with its history (who, when, from → to, note)',
			parameters: [{ name: 'id', in: 'path', required: true, schema: int }],
			responses: { '200': jsonResponse('request', { allOf: [request, { type: 'object', properties: { events: { type: 'array', items: event } } }] }), ...errors(401, 403, 404) }
		},
		patch: {
			summary:
				'Steps (status: requested, ordered, draft, cancelled, closed; others 409), edits (quantity, unitPrice while draft or requested; orderReference) or receives goods (receive; writes the stock receive movement). The stockroom may only receive.',
			parameters: [{ name: 'id', in: 'path', required: true, schema: int }],
			requestBody: jsonBody({
				type: 'object',
				additionalProperties: false,
				properties: {
					status: { type: 'string', enum: statuses },
					quantity: { ...int, minimum: 1 },
					unitPrice: price,
					orderReference: nstr,
					receive: {
						type: 'object',
						additionalProperties: false,
						required: ['quantity', 'locationId'],
						properties: { quantity: { ...int, minimum: 1 }, locationId: int, condition: { type: 'string', enum: ['usable', 'quarantine', 'damaged'], default: 'usable' } }
					},
					note: nstr
				}
			}),
			responses: { '200': jsonResponse('the request with its history'), ...errors(400, 401, 403, 404, 409, 415) }
		}
	}
};
