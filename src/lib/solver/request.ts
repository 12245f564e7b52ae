/**
 * The questions of Build from stock, validated at the edge (API and page): `imaging` (an object
 * onto a target plane), `beam` (a Gaussian laser beam into a target waist) and `afocal` (beam
 * expanders and reducers). One discriminated union on `mode`; a request without `mode` is an
 * imaging question. Every limit has a field message that says what is allowed, so a 400 names
 * the field and the fix.
 */
import { z } from 'zod';
import { normalisedFrequency, marcuseRangeProblem } from '../optics/fibre';
import { DEFAULT_WAVELENGTH_NM } from '../optics/materials';

/** Largest time budget a client may ask for, ms. */
export const MAX_TIME_BUDGET_MS = 10_000;
/** Default time budget, ms. */
export const DEFAULT_TIME_BUDGET_MS = 5_000;

const num = (label: string) => z.number({ error: `${label} must be a number.` }).refine(Number.isFinite, `${label} must be a finite number.`);

/** The imaging question (`mode` may be left out). */
export const imagingRequestSchema = z
	.object({
		mode: z.literal('imaging', { error: 'The mode must be "imaging", "beam" or "afocal".' }).default('imaging'),
		wavelengthNm: num('The wavelength')
			.pipe(z.number().min(200, 'The wavelength must be at least 200 nm.').max(12_000, 'The wavelength must be at most 12000 nm.'))
			.default(DEFAULT_WAVELENGTH_NM),
		trackMm: num('The track').pipe(
			z.number().gt(0, 'The track (object plane to target plane) must be longer than 0 mm.').max(20_000, 'The track must be at most 20000 mm.')
		),
		trackToleranceMm: num('The track tolerance')
			.pipe(z.number().min(0, 'The track tolerance cannot be negative.').max(1000, 'The track tolerance must be at most 1000 mm.'))
			.default(0),
		magnification: num('The magnification')
			.refine((m) => m !== 0, 'The magnification cannot be 0: an image needs a size.')
			.refine((m) => Math.abs(m) >= 0.001 && Math.abs(m) <= 1000, 'The magnification must lie between 0.001 and 1000 in size.'),
		magnificationTolerance: num('The magnification tolerance')
			.pipe(z.number().min(0, 'The magnification tolerance cannot be negative.').max(0.5, 'The magnification tolerance must be at most 0.5 (±50 %).'))
			.default(0.02),
		objectHeightMm: num('The object height')
			.pipe(z.number().min(0, 'The object height cannot be negative.').max(1000, 'The object height must be at most 1000 mm.'))
			.default(0),
		objectNA: num('The object NA').pipe(
			z.number().gt(0, 'The object NA must be above 0.').lt(1, 'The object NA must be below 1 (the object is in air).')
		),
		maxElements: z.union([z.literal(1), z.literal(2)], { error: 'At most 1 or 2 parts per setup.' }).default(2),
		minGapMm: num('The minimum gap')
			.pipe(z.number().min(0, 'The minimum gap cannot be negative.').max(1000, 'The minimum gap must be at most 1000 mm.'))
			.default(1),
		minWorkingDistanceMm: num('The minimum working distance')
			.pipe(z.number().min(0, 'The minimum working distance cannot be negative.').max(10_000, 'The minimum working distance must be at most 10000 mm.'))
			.default(5),
		availableOnly: z.boolean({ error: 'availableOnly must be true or false.' }).default(true),
		/**
		 * Leave out parts whose coating band (read from their coating text) does not cover the wavelength.
		 * Off by default: such parts are then used, their answers carry a coating warning and rank after
		 * in-band ones. Parts without a known band are never left out.
		 */
		inCoatingBandOnly: z.boolean({ error: 'inCoatingBandOnly must be true or false.' }).default(false),
		partIds: z.array(z.number().int().positive(), { error: 'partIds must be a list of part ids.' }).min(1, 'Give at least one part id, or leave partIds out.').max(5000, 'At most 5000 part ids.').optional(),
		locationIds: z
			.array(z.number().int().positive(), { error: 'locationIds must be a list of location ids.' })
			.min(1, 'Give at least one location id, or leave locationIds out.')
			.max(200, 'At most 200 location ids.')
			.optional(),
		limit: z.number().int('The limit must be a whole number.').min(1, 'The limit must be at least 1.').max(50, 'The limit must be at most 50.').default(10),
		rankBy: z
			.enum(['monochromatic', 'band'], { error: 'rankBy must be "monochromatic" (the working wavelength) or "band" (over the colour band).' })
			.default('monochromatic'),
		timeBudgetMs: z
			.number()
			.int()
			.min(100, 'The time budget must be at least 100 ms.')
			.max(MAX_TIME_BUDGET_MS, `The time budget must be at most ${MAX_TIME_BUDGET_MS} ms.`)
			.default(DEFAULT_TIME_BUDGET_MS)
	})
	.strict()
	.superRefine((q, ctx) => {
		if (typeof q.trackMm === 'number' && typeof q.trackToleranceMm === 'number' && q.trackToleranceMm > 0 && q.trackToleranceMm >= q.trackMm) {
			ctx.addIssue({ code: 'custom', path: ['trackToleranceMm'], message: 'The track tolerance must be shorter than the track.' });
		}
	});

export type ImagingRequestInput = z.input<typeof imagingRequestSchema>;
export type ParsedImagingRequest = z.output<typeof imagingRequestSchema>;

/** Positions along the axis (from the bench's reference plane z = 0), mm. */
const positionMm = (label: string) =>
	num(label).pipe(z.number().min(-100_000, `${label} must be at least -100000 mm.`).max(100_000, `${label} must be at most 100000 mm.`));
const diameterMm = (label: string, max = 500) =>
	num(label).pipe(z.number().gt(0, `${label} must be larger than 0 mm.`).max(max, `${label} must be at most ${max} mm.`));

/** Largest far-field half-angle M²λ/(πw₀) a question may ask for: beyond it the paraxial Gaussian model no longer holds (common practice, no source). */
export const MAX_BEAM_DIVERGENCE_RAD = 0.25;
/** Default smallest efficiency of an answer in mode beam (below it, the best is shown as a near miss). */
export const DEFAULT_MIN_EFFICIENCY = 0.8;

/** Fields every mode shares (stock filter, answer count, time budget). */
const shared = {
	availableOnly: imagingRequestSchema.shape.availableOnly,
	inCoatingBandOnly: imagingRequestSchema.shape.inCoatingBandOnly,
	partIds: imagingRequestSchema.shape.partIds,
	locationIds: imagingRequestSchema.shape.locationIds,
	limit: imagingRequestSchema.shape.limit,
	timeBudgetMs: imagingRequestSchema.shape.timeBudgetMs,
	minGapMm: imagingRequestSchema.shape.minGapMm
};

/** A laser's working wavelength: no default (a beam question is always about one laser). */
const laserWavelength = num('The wavelength').pipe(
	z.number().min(200, 'The wavelength must be at least 200 nm.').max(12_000, 'The wavelength must be at most 12000 nm.')
);

const minClearance = num('The clearance factor')
	.pipe(
		z
			.number()
			.min(1, 'The clearance factor must be at least 1: the clear aperture must pass the 1/e² beam diameter.')
			.max(10, 'The clearance factor must be at most 10.')
	)
	.default(1.5);

/** A single-mode fibre as the target: the mode field diameter, or core diameter and NA (Marcuse's approximation). */
export const fibreSchema = z
	.object({
		modeFieldDiameterMm: diameterMm('The mode field diameter', 1).optional(),
		coreDiameterMm: diameterMm('The core diameter', 1).optional(),
		numericalAperture: num('The fibre NA').pipe(z.number().gt(0, 'The fibre NA must be above 0.').lt(1, 'The fibre NA must be below 1.')).optional()
	})
	.strict()
	.superRefine((f, ctx) => {
		if (f.modeFieldDiameterMm !== undefined) {
			if (f.coreDiameterMm !== undefined || f.numericalAperture !== undefined) {
				ctx.addIssue({ code: 'custom', path: ['modeFieldDiameterMm'], message: 'Give the mode field diameter, or core diameter and NA, not both.' });
			}
			return;
		}
		if (f.coreDiameterMm === undefined) ctx.addIssue({ code: 'custom', path: ['coreDiameterMm'], message: 'Give the mode field diameter, or the core diameter and the NA.' });
		if (f.numericalAperture === undefined) ctx.addIssue({ code: 'custom', path: ['numericalAperture'], message: 'Give the mode field diameter, or the core diameter and the NA.' });
	});

export const beamInputSchema = z
	.object({
		waistDiameterMm: diameterMm('The input waist diameter'),
		waistPositionMm: positionMm('The input waist position'),
		mSquared: num('M²').pipe(z.number().min(1, 'M² cannot be below 1 (an ideal Gaussian beam has M² = 1).').max(100, 'M² must be at most 100.')).default(1)
	})
	.strict();

export const beamTargetSchema = z
	.object({
		waistPositionMm: positionMm('The target waist position'),
		waistDiameterMm: diameterMm('The target waist diameter').optional(),
		fibre: fibreSchema.optional()
	})
	.strict()
	.superRefine((t, ctx) => {
		if ((t.waistDiameterMm === undefined) === (t.fibre === undefined)) {
			ctx.addIssue({ code: 'custom', path: ['waistDiameterMm'], message: 'Give the target waist diameter, or a fibre (its mode field), one of the two.' });
		}
	});

/** Mode `beam`: one or two stock parts that turn the input Gaussian beam into the target beam. */
export const beamRequestSchema = z
	.object({
		mode: z.literal('beam'),
		wavelengthNm: laserWavelength,
		input: beamInputSchema,
		target: beamTargetSchema,
		maxElements: imagingRequestSchema.shape.maxElements,
		minWorkingDistanceMm: imagingRequestSchema.shape.minWorkingDistanceMm,
		minClearance,
		minEfficiency: num('The smallest efficiency')
			.pipe(z.number().gt(0, 'The smallest efficiency must be above 0.').max(1, 'The smallest efficiency must be at most 1.'))
			.default(DEFAULT_MIN_EFFICIENCY),
		powerW: num('The beam power').pipe(z.number().gt(0, 'The beam power must be above 0 W.').max(1e6, 'The beam power must be at most 1000000 W.')).optional(),
		...shared
	})
	.strict()
	.superRefine((q, ctx) => {
		const m2 = q.input.mSquared;
		const lambdaMm = q.wavelengthNm * 1e-6;
		// Checks across fields only when the fields themselves are valid (their own messages say the rest).
		const valid = (x: unknown) => typeof x === 'number' && Number.isFinite(x);
		if (!valid(m2) || m2 < 1 || !valid(lambdaMm)) return;
		const tooFast = (diameter: number) => valid(diameter) && diameter > 0 && (m2 * lambdaMm) / (Math.PI * (diameter / 2)) > MAX_BEAM_DIVERGENCE_RAD;
		if (tooFast(q.input.waistDiameterMm)) {
			ctx.addIssue({
				code: 'custom',
				path: ['input', 'waistDiameterMm'],
				message: `A waist this small diverges faster than ${MAX_BEAM_DIVERGENCE_RAD} rad, beyond the paraxial beam model.`
			});
		}
		if (q.target.waistDiameterMm !== undefined && tooFast(q.target.waistDiameterMm)) {
			const least = (2 * m2 * lambdaMm) / (Math.PI * MAX_BEAM_DIVERGENCE_RAD);
			ctx.addIssue({
				code: 'custom',
				path: ['target', 'waistDiameterMm'],
				message: `This target cannot be reached: at ${q.wavelengthNm} nm with M² = ${m2}, a waist below ${least.toPrecision(3)} mm diverges faster than stock lenses can focus.`
			});
		}
		const fibre = q.target.fibre;
		if (fibre?.coreDiameterMm !== undefined && fibre.numericalAperture !== undefined) {
			const v = normalisedFrequency(fibre.coreDiameterMm, fibre.numericalAperture, q.wavelengthNm);
			const why = marcuseRangeProblem(v, q.wavelengthNm);
			if (why) ctx.addIssue({ code: 'custom', path: ['target', 'fibre', 'coreDiameterMm'], message: why });
		}
		if (valid(q.target.waistPositionMm) && q.target.waistPositionMm < q.minWorkingDistanceMm) {
			ctx.addIssue({
				code: 'custom',
				path: ['target', 'waistPositionMm'],
				message: `This target cannot be reached: parts lie at z ≥ 0 and end at least ${q.minWorkingDistanceMm} mm (the working distance) before the target waist.`
			});
		}
	});

/** Mode `afocal`: beam expanders and reducers from two stock parts. */
export const afocalRequestSchema = z
	.object({
		mode: z.literal('afocal'),
		wavelengthNm: laserWavelength,
		expansion: num('The expansion').pipe(
			z.number().min(0.01, 'The expansion must be at least 0.01 (a 100× reducer).').max(100, 'The expansion must be at most 100.')
		),
		expansionTolerance: num('The expansion tolerance')
			.pipe(z.number().min(0, 'The expansion tolerance cannot be negative.').max(0.5, 'The expansion tolerance must be at most 0.5 (±50 %).'))
			.default(0.02),
		inputBeamDiameterMm: diameterMm('The input beam diameter'),
		maxLengthMm: num('The largest length').pipe(z.number().gt(0, 'The largest length must be above 0 mm.').max(20_000, 'The largest length must be at most 20000 mm.')),
		intermediateFocus: z.boolean({ error: 'intermediateFocus must be true or false (or left out for both kinds).' }).optional(),
		minClearance,
		...shared
	})
	.strict()
	.superRefine((q, ctx) => {
		if (Math.abs(q.expansion - 1) <= q.expansionTolerance) {
			ctx.addIssue({ code: 'custom', path: ['expansion'], message: 'An expansion of 1 within the tolerance changes nothing: ask for a larger or smaller beam.' });
		}
	});

export type BeamRequestInput = z.input<typeof beamRequestSchema>;
export type ParsedBeamRequest = z.output<typeof beamRequestSchema>;
export type AfocalRequestInput = z.input<typeof afocalRequestSchema>;
export type ParsedAfocalRequest = z.output<typeof afocalRequestSchema>;

/** The modes of Build from stock. */
export const SOLVE_MODES = ['imaging', 'beam', 'afocal'] as const;
export type SolveMode = (typeof SOLVE_MODES)[number];

/**
 * Any question of Build from stock: a union discriminated on `mode`; a body without `mode` is an
 * imaging question (the API before the beam modes).
 */
export const solveRequestSchema = z.preprocess(
	(v) => (v !== null && typeof v === 'object' && !Array.isArray(v) && !('mode' in v) ? { ...v, mode: 'imaging' } : v),
	z.discriminatedUnion('mode', [imagingRequestSchema, beamRequestSchema, afocalRequestSchema], {
		error: (iss) => (iss.code === 'invalid_union' ? 'The mode must be "imaging", "beam" or "afocal".' : undefined)
	})
);

export type SolveRequestInput = z.input<typeof solveRequestSchema>;
export type ParsedSolveRequest = z.output<typeof solveRequestSchema>;
/**
 * The magnification a question follows from when it gives object and image sizes instead:
 * m = −image/object for a real inverted image (the usual case of one or two positive parts),
 * or +image/object when an upright image is asked for.
 */
export function magnificationFromSizes(objectSizeMm: number, imageSizeMm: number, upright = false): number | null {
	if (!(objectSizeMm > 0) || !(imageSizeMm > 0)) return null;
	return (upright ? 1 : -1) * (imageSizeMm / objectSizeMm);
}

/** NA from a working f-number on the object side: NA = 1 / (2N) (paraxial; common practice, no source). */
export function naFromFNumber(fNumber: number): number | null {
	return fNumber > 0.5 ? 1 / (2 * fNumber) : null;
}
