/** OpenAPI paths of Build from stock: the solver (modes imaging, beam, afocal) and setups. */
import { z } from 'zod';
import { solveRequestSchema } from '$lib/solver/request';
import { reserveInputSchema, setupInputSchema } from '$lib/server/solver/setups';
import { reservationJson } from './catalogue';
import { errors, jsonBody, jsonResponse, type OpenApiPaths } from './build';

const int = z.number().int();

const question = solveRequestSchema.meta({
	description:
		'A union on `mode`; a body without mode is an imaging question. Mode beam: one or two parts that turn the input Gaussian beam into the target beam ' +
		'(parts at z ≥ 0, positions along the axis from the bench reference plane z = 0, light towards +z; diameters are full 1/e² intensity diameters; ' +
		'target: exactly one of waistDiameterMm and fibre). Mode afocal: beam expanders and reducers from two parts at the afocal gap of the thick matrices. ' +
		'400 names the field of a cross-field refusal with a dotted path (target.waistDiameterMm).'
});

const imagingSolution = z.looseObject({}).meta({
	description:
		'elements [{partId, sku, reversed, symmetric, orientation, firstVertexMm (from the object plane), eflMm, eflSource, toBuy, available, locations}], ' +
		'objectDistanceMm, gapsMm, backDistanceMm, magnification, systemMatrix {A,B,C,D}, pointTransferMatrix (3x3 row-major), ' +
		'afocalFamily, doubleRoot, spot {axialRmsMm, edgeRmsMm, airyRadiusMm, ratioToAiry, untracedReason}, vignetting {axial, edge, worstFill}, rays, tolerance'
});
const beamSolution = z.looseObject({ mode: z.literal('beam') }).meta({
	description:
		'elements as for imaging, firstVertexMm from z = 0; objectDistanceMm (z = 0 to the first vertex), gapsMm, backDistanceMm (last vertex to the target waist); ' +
		'beam {outputWaistDiameterMm, outputWaistPositionMm, efficiency (0–1), minClearance, lengthMm, waists, parts, systemMatrix, envelope, peakIrradianceWPerCm2}. ' +
		'Ranked by efficiency, then clearance in steps of 2× over minClearance, then length, then part count.'
});
const afocalSolution = z.looseObject({ mode: z.literal('afocal') }).meta({
	description:
		'elements with firstVertexMm from the first part’s first vertex; gapsMm [the afocal gap]; afocal {expansion, lengthMm, inverted, residualDivergenceMrad, ' +
		'intermediateFocusMm, gapMm, outputBeamDiameterMm, minClearance, parts, systemMatrix, marginalRay}. Ranked by residual divergence, then length.'
});
const solution = z.union([beamSolution, afocalSolution, imagingSolution]);

const setup = z.looseObject({
	id: int,
	name: z.string(),
	projectId: int.nullable(),
	query: z.looseObject({}),
	solution: solution.nullable(),
	reservations: z.array(reservationJson).optional()
});

export const solverPaths: OpenApiPaths = {
	'/solve': {
		post: {
			summary: 'Build from stock: one- and two-part setups from usable, unreserved stock for an imaging, beam-shaping or beam-expanding question',
			requestBody: jsonBody(question),
			responses: {
				'200': jsonResponse(
					'Solutions and stats',
					z.looseObject({
						request: z.looseObject({ mode: z.enum(['imaging', 'beam', 'afocal']) }),
						solutions: z.array(solution),
						noAnswer: z
							.looseObject({ reason: z.string(), hint: z.string() })
							.nullable()
							.optional()
							.describe('modes beam and afocal, when no answer qualifies: {reason, hint, nearMiss (the nearest answer with its figures, or null)}'),
						stats: z.looseObject({ partsConsidered: int, configurationsEvaluated: int, elapsedMs: z.number(), truncated: z.boolean() })
					})
				),
				...errors(400, 401, 403, 415, 429)
			}
		}
	},
	'/setups': {
		get: { summary: 'Recent setups', responses: { '200': jsonResponse('Setups'), ...errors(401, 403) } },
		post: {
			summary: 'Save a question with its chosen solution as a setup (re-evaluated by the server)',
			description:
				'`choice`: the parts, their orientation and positions of a returned solution (mode beam: objectDistanceMm from z = 0, backDistanceMm to the target waist; mode afocal: both 0).',
			requestBody: jsonBody(setupInputSchema),
			responses: { '201': jsonResponse('The setup', setup), ...errors(400, 401, 403, 415) }
		}
	},
	'/setups/{id}': {
		get: { summary: 'One setup', responses: { '200': jsonResponse('The setup', setup), ...errors(401, 403, 404) } }
	},
	'/setups/{id}/reservations': {
		post: {
			summary: 'Reserve every part of a setup in one step',
			requestBody: jsonBody(reserveInputSchema),
			responses: { '201': jsonResponse('The reservations made'), ...errors(400, 401, 403, 404, 409, 415) }
		}
	}
};
