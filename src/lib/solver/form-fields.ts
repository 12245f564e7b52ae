/**
 * The /build form's questions, presets and field names, shared by the form reader on the server
 * (`$lib/server/solver/form.ts`) and the page (which maps the API's field names onto its own
 * fields when the solver refuses a question). One list, so that the two never drift apart.
 * Every field is text in the URL, so a link reproduces the question.
 */

import { DEFAULT_WAVELENGTH_NM } from '../optics/materials';

/** The three questions of Build from stock. */
export type Question = 'imaging' | 'beam' | 'afocal';
export const QUESTIONS: readonly { id: Question; label: string; blurb: string }[] = [
	{ id: 'imaging', label: 'Image an object', blurb: 'an object plane onto a target plane at a magnification' },
	{ id: 'beam', label: 'Shape a laser beam', blurb: 'focus, collimate, couple into a fibre, or any waist to waist' },
	{ id: 'afocal', label: 'Expand a beam', blurb: 'a collimated beam made wider or narrower by a factor' }
];
export const isQuestion = (q: string | null): q is Question => q === 'imaging' || q === 'beam' || q === 'afocal';

/** Presets of "Shape a laser beam": each fills the same beam question with its own words. */
export type BeamPreset = 'focus' | 'collimate' | 'fibre' | 'waist';
export const BEAM_PRESETS: readonly { id: BeamPreset; label: string; example: string }[] = [
	{ id: 'focus', label: 'Focus', example: 'focus a 2 mm beam to a 20 µm spot 150 mm away' },
	{ id: 'collimate', label: 'Collimate', example: 'the light out of a fibre to a 3 mm beam' },
	{ id: 'fibre', label: 'Into a fibre', example: 'couple a beam into a single-mode fibre' },
	{ id: 'waist', label: 'Waist to waist', example: 'any input waist to any target waist' }
];
export const isBeamPreset = (p: string | null): p is BeamPreset => p === 'focus' || p === 'collimate' || p === 'fibre' || p === 'waist';

/** Imaging fields, as text, with their defaults (the wavelength: the lab's, see the form reader). */
export const IMAGING_DEFAULTS = {
	objectHeight: '2 mm',
	track: '300 mm',
	trackTolerance: '0 mm',
	magnification: '-0.5',
	objectSize: '',
	imageSize: '',
	na: '0.05',
	fNumber: '',
	wavelength: `${DEFAULT_WAVELENGTH_NM} nm`,
	minGap: '1 mm',
	minWd: '5 mm',
	available: 'true',
	coating: 'any',
	maxParts: '2',
	rankBy: 'monochromatic'
};
export type ImagingValues = typeof IMAGING_DEFAULTS;

/**
 * Beam fields. `inD`/`inAt`: the input waist (1/e² diameter, position from z = 0); `outD`/`outAt`:
 * the target waist. A fibre (collimate: the source; into a fibre: the target) is given by its mode
 * field diameter `mfd`, or by `core` diameter and `fibreNa` (the mode field then follows by
 * Marcuse's formula). `minEff` is the smallest efficiency in % (below it an answer is a near miss).
 * `power` is optional, for the irradiance at the focus.
 */
const BEAM_COMMON = {
	m2: '1',
	wavelength: '1064 nm',
	minGap: '1 mm',
	minWd: '5 mm',
	clearance: '1.5',
	minEff: '80',
	available: 'true',
	coating: 'any',
	maxParts: '2',
	power: '',
	mfd: '',
	core: '',
	fibreNa: ''
};
export const BEAM_DEFAULTS: Record<BeamPreset, typeof BEAM_COMMON & { inD: string; inAt: string; outD: string; outAt: string }> = {
	focus: { ...BEAM_COMMON, inD: '2 mm', inAt: '0 mm', outD: '20 um', outAt: '150 mm' },
	collimate: { ...BEAM_COMMON, wavelength: '632.8 nm', inD: '', inAt: '0 mm', outD: '3 mm', outAt: '500 mm', mfd: '4.3 um' },
	fibre: { ...BEAM_COMMON, inD: '3 mm', inAt: '0 mm', outD: '', outAt: '120 mm', mfd: '6.2 um' },
	waist: { ...BEAM_COMMON, wavelength: '632.8 nm', inD: '1 mm', inAt: '-100 mm', outD: '0.5 mm', outAt: '300 mm' }
};
export type BeamValues = (typeof BEAM_DEFAULTS)['focus'];

/**
 * "Expand a beam" fields; `focus` is 'any' (both kinds), 'focus' (only with a real focus between
 * the parts: two positive parts) or 'none' (only without one: a negative part first).
 * `tolerance` is in % (2 = ±2 %).
 */
export const AFOCAL_DEFAULTS = {
	wavelength: '632.8 nm',
	inD: '1 mm',
	expansion: '5',
	tolerance: '2',
	maxLength: '250 mm',
	focus: 'any',
	minGap: '1 mm',
	clearance: '1.5',
	available: 'true',
	coating: 'any',
	power: ''
};
export type AfocalValues = typeof AFOCAL_DEFAULTS;

/** The URL keys of the question choice itself (never a field of the solver). */
export const QUESTION_KEY = 'question';
export const PRESET_KEY = 'preset';

/**
 * API field (the solve request's names, dotted for nested ones, as the API's 400 names them) →
 * the form field that holds it. For "collimate", the fibre is the source: `input.waistDiameterMm`
 * is its mode field (see `formFieldOf`).
 */
export const IMAGING_FIELD_OF_API: Record<string, keyof ImagingValues> = {
	wavelengthNm: 'wavelength',
	trackMm: 'track',
	trackToleranceMm: 'trackTolerance',
	magnification: 'magnification',
	objectNA: 'na',
	objectHeightMm: 'objectHeight',
	minGapMm: 'minGap',
	minWorkingDistanceMm: 'minWd'
};
export const BEAM_FIELD_OF_API: Record<string, keyof BeamValues> = {
	wavelengthNm: 'wavelength',
	'input.waistDiameterMm': 'inD',
	'input.waistPositionMm': 'inAt',
	'input.mSquared': 'm2',
	'target.waistDiameterMm': 'outD',
	'target.waistPositionMm': 'outAt',
	minGapMm: 'minGap',
	minWorkingDistanceMm: 'minWd',
	minClearance: 'clearance',
	minEfficiency: 'minEff',
	maxElements: 'maxParts',
	powerW: 'power',
	'target.fibre.modeFieldDiameterMm': 'mfd',
	'target.fibre.coreDiameterMm': 'core',
	'target.fibre.numericalAperture': 'fibreNa'
};
export const AFOCAL_FIELD_OF_API: Record<string, keyof AfocalValues> = {
	wavelengthNm: 'wavelength',
	inputBeamDiameterMm: 'inD',
	expansion: 'expansion',
	expansionTolerance: 'tolerance',
	maxLengthMm: 'maxLength',
	intermediateFocus: 'focus',
	minGapMm: 'minGap',
	minClearance: 'clearance'
};

/**
 * The form field for an API field name of `question` (the name itself when no field holds it).
 * `fibreField`: where "collimate" shows its fibre ('mfd', or 'core' when given by core and NA).
 */
export function formFieldOf(question: Question, apiField: string, preset: BeamPreset | null = null, fibreField: 'mfd' | 'core' = 'mfd'): string {
	if (question === 'beam' && preset === 'collimate' && apiField === 'input.waistDiameterMm') return fibreField;
	const map: Record<string, string> = question === 'imaging' ? IMAGING_FIELD_OF_API : question === 'beam' ? BEAM_FIELD_OF_API : AFOCAL_FIELD_OF_API;
	return map[apiField] ?? apiField;
}
