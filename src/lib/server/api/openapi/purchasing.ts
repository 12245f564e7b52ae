/** OpenAPI paths of purchasing: the reorder board, its CSV export, unlocks, purchase requests. */
import { z } from 'zod';
import { REQUEST_STATUSES } from '$lib/server/db/schema';
import { createRequestSchema, listQuerySchema, patchRequestSchema } from '$lib/server/purchasing/requests';
import { unlockInputSchema } from '$lib/server/purchasing/unlock-search';
import { bytesResponse, errors, jsonBody, jsonResponse, queryParams, type OpenApiPaths } from './build';

const int = z.number().int();
const nint = int.nullable();
const nstr = z.string().nullable();
const dateTime = z.string().meta({ format: 'date-time' });
/** One unit per name: `unitPrice` is always currency units with at most two decimals. */
const price = z.number().nullable().describe('currency units of `currency`, at most two decimals (38.50)');

const boardRow = z.looseObject({
	partId: int,
	sku: z.string(),
	name: z.string(),
	supplier: nstr,
	supplierPartNumber: nstr,
	unitPrice: price,
	currency: z.string(),
	leadTimeDays: nint,
	reorderPoint: int,
	reorderQuantity: int,
	onHand: int.describe('usable units on hand (only these count)'),
	quarantine: int.describe('units waiting for inspection (not counted as on hand)'),
	damaged: int.describe('damaged units (not counted as on hand)'),
	reserved: int,
	available: int,
	usage90d: int.describe('issued + scrapped − returned over the last 90 days (ledger)'),
	onOrder: int.describe('units on open requests, not yet received'),
	suggestedQuantity: int,
	suggestion: z.string().describe('the arithmetic behind suggestedQuantity, in words'),
	flag: z.enum(['reorder-point', 'over-reserved']).nullable(),
	flaggedSince: dateTime.nullable(),
	setupsUsing: int,
	setupsUnlocked: int.describe('saved setups not buildable now that buying this part alone would unlock'),
	unlocks: z.array(z.looseObject({ setupId: int, name: z.string(), missing: int }))
});

const request = z.looseObject({
	id: int,
	partId: int,
	sku: z.string(),
	partName: z.string(),
	supplier: nstr,
	status: z.enum(REQUEST_STATUSES),
	quantity: int,
	receivedQuantity: int,
	unitPrice: price,
	currency: z.string(),
	leadTimeDays: nint,
	orderReference: nstr,
	note: nstr,
	createdBy: z.looseObject({ id: int, name: z.string() }),
	createdAt: dateTime,
	updatedAt: dateTime,
	allowedSteps: z.array(z.enum(REQUEST_STATUSES)),
	receivable: z.boolean()
});

const event = z.looseObject({
	id: int,
	at: dateTime,
	userId: int,
	userName: z.string(),
	from: z.enum(REQUEST_STATUSES).nullable(),
	to: z.enum(REQUEST_STATUSES),
	quantity: nint,
	locationId: nint,
	locationCode: nstr,
	movementId: nint.describe('the ledger movement a receipt wrote'),
	note: nstr
});

const offer = z.looseObject({ partId: int, sku: z.string(), name: z.string(), quantity: int, unitPrice: price, currency: z.string(), supplier: nstr, leadTimeDays: nint });
const brief = z.looseObject({
	rank: int,
	skus: z.array(z.string()),
	partIds: z.array(int).describe('in the order light meets them'),
	mode: z.enum(['imaging', 'beam', 'afocal']),
	magnification: z.number().nullable().describe('imaging only'),
	ratioToAiry: z.number().nullable().describe('imaging: max(axial, edge) RMS spot over the Airy radius'),
	spotRmsMm: z.number().nullable(),
	airyRadiusMm: z.number().nullable(),
	objectDistanceMm: z.number(),
	backDistanceMm: z.number(),
	vignetted: z.boolean(),
	efficiency: z.number().nullable().describe('beam: overlap with the target beam, 0–1'),
	outputWaistDiameterMm: z.number().nullable().describe('beam'),
	outputWaistPositionMm: z.number().nullable().describe('beam, from z = 0'),
	expansion: z.number().nullable().describe('afocal'),
	residualDivergenceMrad: z.number().nullable().describe('afocal'),
	lengthMm: z.number().nullable().describe('beam and afocal: first vertex to last vertex')
});
const shortPart = offer.extend({ needed: int, available: int.describe("available stock plus units the setup's own active reservations hold") });

export const purchasingPaths: OpenApiPaths = {
	'/reorder': {
		get: {
			summary: 'Reorder board: flagged parts and parts whose purchase would unlock a saved setup (purchasers)',
			responses: { '200': jsonResponse('board', z.looseObject({ items: z.array(boardRow), usageDays: int })), ...errors(401, 403) }
		}
	},
	'/reorder/export.csv': {
		get: {
			summary: 'Selected board rows as a CSV for the supplier (purchasers)',
			parameters: [
				{ name: 'partId', in: 'query', required: true, schema: { type: 'array', items: { type: 'integer', minimum: 1 }, maxItems: 500 }, style: 'form', explode: true },
				{ name: 'qty-{partId}', in: 'query', required: false, schema: { type: 'integer', minimum: 0 }, description: 'quantity to order instead of the suggestion' }
			],
			responses: {
				'200': bytesResponse(
					'CSV (UTF-8 with BOM): sku, name, supplier, supplierPartNumber, quantity, unitPrice (currency units, 38.50), currency, leadTimeDays, onHand, available, reorderPoint',
					'text/csv'
				),
				...errors(400, 401, 403)
			}
		}
	},
	'/reorder/unlock': {
		post: {
			summary: 'Which single purchase gives the best setup, for a saved setup or a Build from stock question (searched with availableOnly: false)',
			description: '`question` is a POST /solve body.',
			requestBody: jsonBody(unlockInputSchema),
			responses: {
				'200': jsonResponse(
					'answer',
					z.looseObject({
						bestFromStock: brief.nullable(),
						purchase: offer.extend({ solution: brief, betterThanStock: z.boolean() }).nullable(),
						setupBuildable: z.boolean().optional(),
						setupShort: z.array(shortPart).optional(),
						stats: z.looseObject({ solutionsSearched: int, elapsedMs: z.number() })
					})
				),
				...errors(400, 401, 404, 415, 429)
			}
		}
	},
	'/purchase-requests': {
		get: {
			summary: 'Purchase requests, newest change first (purchasers, stockroom)',
			parameters: queryParams(listQuerySchema),
			responses: { '200': jsonResponse('requests', z.looseObject({ items: z.array(request) })), ...errors(400, 401, 403) }
		},
		post: {
			summary: 'Creates a request, or several in one transaction with {items: [...]} (purchasers)',
			requestBody: jsonBody(z.union([createRequestSchema, z.object({ items: z.array(createRequestSchema).min(1).max(500) }).strict()])),
			responses: { '201': jsonResponse('the request, or {items}', z.union([request, z.looseObject({ items: z.array(request) })])), ...errors(400, 401, 403, 409, 415) }
		}
	},
	'/purchase-requests/{id}': {
		get: {
			summary: 'One request with its history (who, when, from → to, note)',
			responses: { '200': jsonResponse('request', request.extend({ events: z.array(event) })), ...errors(401, 403, 404) }
		},
		patch: {
			summary:
				'Steps (status: requested, ordered, draft, cancelled, closed; others 409), edits (quantity, unitPrice while draft or requested; orderReference) or receives goods (receive; writes the stock receive movement). The stockroom may only receive.',
			requestBody: jsonBody(patchRequestSchema),
			responses: { '200': jsonResponse('the request with its history'), ...errors(400, 401, 403, 404, 409, 415) }
		}
	}
};
