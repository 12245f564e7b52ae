/** OpenAPI paths of Build from stock: the solver and setups. */
import type { OpenApiPaths } from './types';
import { errors, jsonBody, jsonResponse } from './types';

const num = { type: 'number' };
const int = { type: 'integer' };

const solveRequest = {
	type: 'object',
	additionalProperties: false,
	required: ['trackMm', 'magnification', 'objectNA'],
	properties: {
		mode: { type: 'string', enum: ['imaging'], default: 'imaging' },
		wavelengthNm: { ...num, minimum: 200, maximum: 12000, default: 587.6 },
		trackMm: { ...num, exclusiveMinimum: 0, description: 'object plane to target plane, mm' },
		magnification: { ...num, description: 'signed; negative = inverted real image; 0.001 ≤ |m| ≤ 1000' },
		magnificationTolerance: { ...num, minimum: 0, maximum: 0.5, default: 0.02, description: 'relative, for single parts' },
		objectHeightMm: { ...num, minimum: 0, default: 0, description: 'half the field' },
		objectNA: { ...num, exclusiveMinimum: 0, exclusiveMaximum: 1 },
		maxElements: { type: 'integer', enum: [1, 2], default: 2 },
		minGapMm: { ...num, minimum: 0, default: 1 },
		minWorkingDistanceMm: { ...num, minimum: 0, default: 5 },
		availableOnly: { type: 'boolean', default: true, description: 'false: catalogue parts without stock too, marked toBuy' },
		partIds: { type: 'array', items: int, description: 'restrict to a kit' },
		locationIds: { type: 'array', items: int, description: 'restrict to parts with usable stock in these locations' },
		limit: { ...int, minimum: 1, maximum: 50, default: 10 },
		timeBudgetMs: { ...int, minimum: 100, maximum: 10000, default: 5000 }
	}
};

const solution = {
	type: 'object',
	description:
		'elements [{partId, sku, reversed, symmetric, orientation ("as catalogued (surface 1 faces the object)" or "reversed (surface N faces the object)", plus flat/curved side for a plano lens), firstVertexMm (from the object plane), eflMm, eflSource, toBuy, available, locations}], ' +
		'objectDistanceMm, gapsMm, backDistanceMm, magnification, systemMatrix {A,B,C,D}, pointTransferMatrix (3x3 row-major), ' +
		'afocalFamily, doubleRoot, spot {axialRmsMm, edgeRmsMm, airyRadiusMm, ratioToAiry, untracedReason}, vignetting {axial, edge, worstFill}, rays, tolerance'
};

const choice = {
	type: 'object',
	additionalProperties: false,
	required: ['elements', 'objectDistanceMm', 'gapsMm', 'backDistanceMm'],
	properties: {
		elements: { type: 'array', minItems: 1, maxItems: 2, items: { type: 'object', properties: { partId: int, reversed: { type: 'boolean' } } } },
		objectDistanceMm: num,
		gapsMm: { type: 'array', items: num },
		backDistanceMm: num
	}
};

const setup = {
	type: 'object',
	properties: {
		id: int,
		name: { type: 'string' },
		projectId: { type: ['integer', 'null'] },
		query: solveRequest,
		solution,
		reservations: { type: 'array', items: { type: 'object' } }
	}
};

export const solverPaths: OpenApiPaths = {
	'/solve': {
		post: {
			summary: 'Build from stock: one- and two-part setups from usable, unreserved stock, ranked by traced quality',
			requestBody: jsonBody(solveRequest),
			responses: {
				'200': jsonResponse('Solutions and stats', {
					type: 'object',
					properties: {
						request: solveRequest,
						solutions: { type: 'array', items: solution },
						stats: {
							type: 'object',
							properties: { partsConsidered: int, configurationsEvaluated: int, elapsedMs: num, truncated: { type: 'boolean' } }
						}
					}
				}),
				...errors(400, 401, 403, 415, 429)
			}
		}
	},
	'/setups': {
		get: { summary: 'Recent setups', responses: { '200': jsonResponse('Setups', { type: 'object' }), ...errors(401, 403) } },
		post: {
			summary: 'Save a question with its chosen solution as a setup (re-evaluated by the server)',
			requestBody: jsonBody({
				type: 'object',
				additionalProperties: false,
				required: ['name', 'query', 'choice'],
				properties: { name: { type: 'string' }, projectId: { type: ['integer', 'null'] }, query: solveRequest, choice }
			}),
			responses: { '201': jsonResponse('The setup', setup), ...errors(400, 401, 403, 415) }
		}
	},
	'/setups/{id}': {
		get: { summary: 'One setup', responses: { '200': jsonResponse('The setup', setup), ...errors(401, 403, 404) } }
	},
	'/setups/{id}/reservations': {
		post: {
			summary: 'Reserve every part of a setup in one step',
			requestBody: jsonBody({
				type: 'object',
				additionalProperties: false,
				required: ['until'],
				properties: { until: { type: 'string', format: 'date-time' }, projectId: { type: ['integer', 'null'] } }
			}),
			responses: { '201': jsonResponse('The reservations made'), ...errors(400, 401, 403, 404, 409, 415) }
		}
	}
};
