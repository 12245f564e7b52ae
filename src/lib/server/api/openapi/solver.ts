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
		'elements [{partId, sku, reversed, symmetric, orientation (bench words a technician can check by eye: which outer face is flat, convex or concave, or the more strongly curved, toward the object; then how that stands to the catalogue listing with the radii of the outer faces, e.g. "more strongly curved face toward the object, flatter face toward the image (both convex); as in the catalogue listing; R 61.5 mm face toward the object, R 129 mm face toward the image"; modes beam and afocal say "toward the incoming beam"), firstVertexMm (from the object plane), eflMm, eflSource, toBuy, available, locations}], ' +
		'objectDistanceMm, gapsMm, backDistanceMm, trackMm (the track this answer uses), trackOffsetMm (that track minus the one asked, within ± trackToleranceMm), magnification, systemMatrix {A,B,C,D}, pointTransferMatrix (3x3 row-major), ' +
		'afocalFamily, doubleRoot, ' +
		'spot {axialRmsMm, edgeRmsMm, statistic, airyRadiusMm, ratioToAiry, untracedReason}: real rays stopped at every clear aperture and glass edge (a ray that misses a surface or meets it behind the previous one is lost); ' +
		'both spots are the RMS radius about the centroid in two dimensions (statistic "rms-radius-about-centroid"): on axis over the cone the aperture stop passes, at the field edge (objectHeightMm) over a pupil grid of skew rays; ' +
		'the Airy radius is that of the cone traced; ratioToAiry = max(axial, edge)/Airy. ' +
		'vignetting {axial, edge (more than 2 % of the requested cone lost), worstFill, axialLostFraction, edgeLostFraction (fraction of the requested cone, NA objectNA, lost on axis and at the field edge, 0–1), ' +
		'edgeBlocked (the field edge passes less than half the light the axis passes: ranked after every other answer, no spot band), tracedNA (object-side NA of the axial cone traced), stop {partIndex, surface} (the aperture stop, surface 1-based in the part as placed) or null}, ' +
		'colour {bandNm [short, centre, long] (F–d–C 486.1/587.6/656.3 nm when wavelengthNm lies in it, else that band scaled by wavelengthNm/587.6), axialColourMm (paraxial image position at the long end minus at the short end), ' +
		'axialRmsMm, edgeRmsMm (RMS radius about the common centroid, the band wavelengths weighted equally), airyRadiusMm (at the centre wavelength), ratioToAiry, note}, rays (never running backwards; a ray stopped at an aperture ends there), tolerance, ' +
		'warnings [{code: "coating-out-of-band", partId, sku, message}] (a part used outside its coating band; such answers rank after in-band ones)'
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
			description:
				'With `Accept: application/x-ndjson` the answer is a stream of JSON lines: {"type":"progress","fraction" (0–1, share searched),"stage" (imaging: "screening", then "proving" while it checks that no better setup exists),"best" ({parts: [sku], efficiency?} ' +
				'or null: the best candidate so far, before its final check)} a few times a second while the search runs; for imaging, when proving the answers best takes a while, ' +
				'one {"type":"provisional","result" (the screening pass\'s answers, stats.provisional true)}; then one {"type":"result","result" (the answer below)} ' +
				'or {"type":"error","status","error"}. Bad input (400) and a busy solver (429) are refused before the stream starts; closing the connection cancels the search.',
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
							.describe(
								'when no answer qualifies: {reason, hint, nearMiss (modes beam and afocal: the nearest answer with its figures, or null)}; ' +
									'mode imaging: {reason, hint, nearTracks [{skus, label, trackMm, trackOffsetMm, objectDistanceMm, backDistanceMm, magnification}] (single parts that image at the magnification asked on another track, nearest first)}'
							),
						stats: z.looseObject({
							partsConsidered: int,
							configurationsEvaluated: int,
							elapsedMs: z.number(),
							truncated: z.boolean(),
							provisional: z.boolean().optional().describe('only on a streamed provisional line: the screening pass\'s answers, sent while the proof runs'),
							provenBest: z.boolean().optional().describe('imaging: every root that could rank among the answers was traced (the best N are proven); false when the time budget cut it short'),
							partsExcluded: z
								.array(z.looseObject({ reason: z.string(), count: int, skus: z.array(z.string()) }))
								.describe('parts left out and why, one entry per reason (no index at the wavelength, outside the coating band when asked)')
						})
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
