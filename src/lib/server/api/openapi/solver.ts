/** OpenAPI paths of Build from stock: the solver (modes imaging, beam, afocal) and setups. */
import type { OpenApiPaths } from './types';
import { errors, jsonBody, jsonResponse } from './types';

const num = { type: 'number' };
const int = { type: 'integer' };

const shared = {
	availableOnly: { type: 'boolean', default: true, description: 'false: catalogue parts without stock too, marked toBuy' },
	inCoatingBandOnly: { type: 'boolean', default: false, description: 'true: leave out parts whose coating band does not cover the wavelength (else they are used, with a coating warning, ranked after in-band answers)' },
	partIds: { type: 'array', items: int, description: 'restrict to a kit' },
	locationIds: { type: 'array', items: int, description: 'restrict to parts with usable stock in these locations' },
	limit: { ...int, minimum: 1, maximum: 50, default: 10 },
	timeBudgetMs: { ...int, minimum: 100, maximum: 10000, default: 5000 },
	minGapMm: { ...num, minimum: 0, default: 1, description: 'smallest vertex gap between two parts, mm' }
};

const imagingRequest = {
	type: 'object',
	additionalProperties: false,
	required: ['trackMm', 'magnification', 'objectNA'],
	properties: {
		mode: { type: 'string', enum: ['imaging'], default: 'imaging', description: 'may be left out (imaging)' },
		wavelengthNm: { ...num, minimum: 200, maximum: 12000, default: 587.6 },
		trackMm: { ...num, exclusiveMinimum: 0, description: 'object plane to target plane, mm' },
		trackToleranceMm: { ...num, minimum: 0, maximum: 1000, default: 0, description: 'an answer may use any track within trackMm ± this, mm (below trackMm); each solution says which (trackMm, trackOffsetMm)' },
		magnification: { ...num, description: 'signed; negative = inverted real image; 0.001 ≤ |m| ≤ 1000' },
		magnificationTolerance: { ...num, minimum: 0, maximum: 0.5, default: 0.02, description: 'relative, for single parts' },
		objectHeightMm: { ...num, minimum: 0, default: 0, description: 'half the field' },
		objectNA: { ...num, exclusiveMinimum: 0, exclusiveMaximum: 1 },
		maxElements: { type: 'integer', enum: [1, 2], default: 2 },
		minGapMm: { ...num, minimum: 0, default: 1 },
		minWorkingDistanceMm: { ...num, minimum: 0, default: 5 },
		availableOnly: { type: 'boolean', default: true, description: 'false: catalogue parts without stock too, marked toBuy' },
		inCoatingBandOnly: { type: 'boolean', default: false, description: 'true: leave out parts outside their coating band' },
		partIds: { type: 'array', items: int, description: 'restrict to a kit' },
		locationIds: { type: 'array', items: int, description: 'restrict to parts with usable stock in these locations' },
		limit: { ...int, minimum: 1, maximum: 50, default: 10 },
		rankBy: {
			type: 'string',
			enum: ['monochromatic', 'band'],
			default: 'monochromatic',
			description: 'rank by the spot figures at wavelengthNm, or by those over the colour band (solution.colour)'
		},
		timeBudgetMs: { ...int, minimum: 100, maximum: 10000, default: 5000 }
	}
};

const position = { ...num, minimum: -100000, maximum: 100000, description: 'along the axis from the bench reference plane z = 0, mm (light towards +z)' };
const diameter = { ...num, exclusiveMinimum: 0, description: 'full 1/e² intensity diameter, mm' };

const beamRequest = {
	type: 'object',
	additionalProperties: false,
	required: ['mode', 'wavelengthNm', 'input', 'target'],
	description:
		'Mode beam: one or two parts that turn the input Gaussian beam into the target beam. Parts lie at z ≥ 0 and end at least minWorkingDistanceMm before the target waist. ' +
		'400 with a field message for a waist ≤ 0 (input.waistDiameterMm), M² < 1 (input.mSquared), a target that cannot be reached (target.waistPositionMm before z = minWorkingDistanceMm; ' +
		'target.waistDiameterMm diverging faster than 0.25 rad), a multimode or too weakly guiding fibre (target.fibre.coreDiameterMm).',
	properties: {
		mode: { type: 'string', enum: ['beam'] },
		wavelengthNm: { ...num, minimum: 200, maximum: 12000 },
		input: {
			type: 'object',
			additionalProperties: false,
			required: ['waistDiameterMm', 'waistPositionMm'],
			properties: {
				waistDiameterMm: diameter,
				waistPositionMm: { ...position, description: 'may be negative (the waist inside the laser)' },
				mSquared: { ...num, minimum: 1, maximum: 100, default: 1, description: 'beam quality; the beam is propagated as M times its embedded Gaussian (Siegman 1986)' }
			}
		},
		target: {
			type: 'object',
			additionalProperties: false,
			required: ['waistPositionMm'],
			description: 'exactly one of waistDiameterMm and fibre',
			properties: {
				waistPositionMm: position,
				waistDiameterMm: diameter,
				fibre: {
					type: 'object',
					additionalProperties: false,
					description: 'a single-mode fibre face at the target: modeFieldDiameterMm, or coreDiameterMm and numericalAperture (mode field by Marcuse 1977)',
					properties: { modeFieldDiameterMm: diameter, coreDiameterMm: { ...num, exclusiveMinimum: 0 }, numericalAperture: { ...num, exclusiveMinimum: 0, exclusiveMaximum: 1 } }
				}
			}
		},
		maxElements: { type: 'integer', enum: [1, 2], default: 2 },
		minWorkingDistanceMm: { ...num, minimum: 0, default: 5, description: 'last vertex to the target waist, at least' },
		minClearance: { ...num, minimum: 1, maximum: 10, default: 1.5, description: 'a part whose clear aperture is below this × the 1/e² beam diameter at it is refused' },
		minEfficiency: { ...num, exclusiveMinimum: 0, maximum: 1, default: 0.8, description: 'answers below it are not returned; the best is then the near miss' },
		powerW: { ...num, exclusiveMinimum: 0, description: 'optional beam power, W: gives the peak irradiance at the focus' },
		...shared
	}
};

const afocalRequest = {
	type: 'object',
	additionalProperties: false,
	required: ['mode', 'wavelengthNm', 'expansion', 'inputBeamDiameterMm', 'maxLengthMm'],
	description: 'Mode afocal: beam expanders and reducers from two parts, spaced at the afocal gap of the thick matrices at the wavelength.',
	properties: {
		mode: { type: 'string', enum: ['afocal'] },
		wavelengthNm: { ...num, minimum: 200, maximum: 12000 },
		expansion: { ...num, minimum: 0.01, maximum: 100, description: 'output over input beam diameter (below 1: a reducer); not 1 within the tolerance' },
		expansionTolerance: { ...num, minimum: 0, maximum: 0.5, default: 0.02 },
		inputBeamDiameterMm: diameter,
		maxLengthMm: { ...num, exclusiveMinimum: 0, description: 'first vertex to last vertex, at most' },
		intermediateFocus: { type: 'boolean', description: 'true: only pairs with a real focus between the parts; false: only pairs without; left out: both' },
		minClearance: { ...num, minimum: 1, maximum: 10, default: 1.5 },
		...shared
	}
};

const solveRequest = { oneOf: [imagingRequest, beamRequest, afocalRequest], discriminator: { propertyName: 'mode' }, description: 'a body without mode is an imaging question' };

const beamSolution = {
	type: 'object',
	description:
		'mode "beam"; elements as for imaging, firstVertexMm from z = 0; objectDistanceMm (z = 0 to the first vertex), gapsMm, backDistanceMm (last vertex to the target waist); ' +
		'beam {outputWaistDiameterMm, outputWaistPositionMm (the focus, from z = 0), efficiency (0–1, overlap with the target beam), minClearance, lengthMm, targetWaistDiameterMm, targetWaistPositionMm, ' +
		'waistOffsetMm, outputRayleighRangeMm, outputDivergenceMrad (full angle), peakIrradianceWPerCm2 (2P/(πw0²) in W/cm², null without powerW), waists [{kind input|intermediate|output, zMm, diameterMm, rayleighRangeMm}], ' +
		'parts [{partIndex, sku, beamDiameterMm, clearApertureMm, clearance, fillRatio, efficiencyAtShift [−1 mm, +1 mm], efficiencyDropPerMm}], systemMatrix (input waist plane to output waist plane), envelope [[zMm, 1/e² radius mm]]}. ' +
		'Ranked by efficiency, then clearance in steps of 2× over minClearance (below 2×, 2–4×, from 4×), then length, then part count.'
};

const afocalSolution = {
	type: 'object',
	description:
		'mode "afocal"; elements with firstVertexMm from the first part\'s first vertex (0 for it); gapsMm [the afocal gap]; ' +
		'afocal {expansion, lengthMm, inverted, residualDivergenceMrad (real ray at the input beam\'s full 1/e² radius; null for a part without surfaces), intermediateFocusMm, gapMm, outputBeamDiameterMm, ' +
		'minClearance, parts, systemMatrix, marginalRay}. Ranked by residual divergence (to 1e-4 mrad), then length.'
};

const noAnswer = {
	type: ['object', 'null'],
	description:
		'when no answer qualifies: {reason, hint, nearMiss (modes beam and afocal: the nearest answer with its figures, or null)}; ' +
		'mode imaging: {reason, hint, nearTracks [{skus, label, trackMm, trackOffsetMm, objectDistanceMm, backDistanceMm, magnification}] (single parts that image at the magnification asked on another track, nearest first)}'
};

const solution = {
	type: 'object',
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
};

const choice = {
	type: 'object',
	description: 'the parts, their orientation and positions of a returned solution (mode beam: objectDistanceMm from z = 0, backDistanceMm to the target waist; mode afocal: both 0); the server re-evaluates it',
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
		solution: { oneOf: [solution, beamSolution, afocalSolution] },
		reservations: { type: 'array', items: { type: 'object' } }
	}
};

export const solverPaths: OpenApiPaths = {
	'/solve': {
		post: {
			summary: 'Build from stock: one- and two-part setups from usable, unreserved stock for an imaging, beam-shaping or beam-expanding question',
			requestBody: jsonBody(solveRequest),
			responses: {
				'200': jsonResponse('Solutions and stats', {
					type: 'object',
					properties: {
						request: solveRequest,
						solutions: { type: 'array', items: { oneOf: [solution, beamSolution, afocalSolution] } },
						noAnswer,
						stats: {
							type: 'object',
							properties: {
								partsConsidered: int,
								configurationsEvaluated: int,
								elapsedMs: num,
								truncated: { type: 'boolean' },
								partsExcluded: {
									type: 'array',
									description: 'parts left out and why, one entry per reason (no index at the wavelength, outside the coating band when asked)',
									items: { type: 'object', properties: { reason: { type: 'string' }, count: int, skus: { type: 'array', items: { type: 'string' } } } }
								}
							}
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
