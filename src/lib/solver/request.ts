/**
 * The imaging question of Build from stock, validated at the edge (API and page). Every limit
 * has a field message that says what is allowed, so a 400 names the field and the fix.
 */
import { z } from 'zod';

/** Largest time budget a client may ask for, ms. */
export const MAX_TIME_BUDGET_MS = 10_000;
/** Default time budget, ms. */
export const DEFAULT_TIME_BUDGET_MS = 5_000;

const num = (label: string) => z.number({ error: `${label} must be a number.` }).refine(Number.isFinite, `${label} must be a finite number.`);

export const solveRequestSchema = z
	.object({
		mode: z.literal('imaging', { error: 'Only the "imaging" mode exists so far.' }).default('imaging'),
		wavelengthNm: num('The wavelength')
			.pipe(z.number().min(200, 'The wavelength must be at least 200 nm.').max(12_000, 'The wavelength must be at most 12000 nm.'))
			.default(587.6),
		trackMm: num('The track').pipe(
			z.number().gt(0, 'The track (object plane to target plane) must be longer than 0 mm.').max(20_000, 'The track must be at most 20000 mm.')
		),
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
		partIds: z.array(z.number().int().positive(), { error: 'partIds must be a list of part ids.' }).min(1, 'Give at least one part id, or leave partIds out.').max(5000, 'At most 5000 part ids.').optional(),
		locationIds: z
			.array(z.number().int().positive(), { error: 'locationIds must be a list of location ids.' })
			.min(1, 'Give at least one location id, or leave locationIds out.')
			.max(200, 'At most 200 location ids.')
			.optional(),
		limit: z.number().int('The limit must be a whole number.').min(1, 'The limit must be at least 1.').max(50, 'The limit must be at most 50.').default(10),
		timeBudgetMs: z
			.number()
			.int()
			.min(100, 'The time budget must be at least 100 ms.')
			.max(MAX_TIME_BUDGET_MS, `The time budget must be at most ${MAX_TIME_BUDGET_MS} ms.`)
			.default(DEFAULT_TIME_BUDGET_MS)
	})
	.strict();

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
