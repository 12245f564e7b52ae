/**
 * The /build form: URL parameters (the form state lives in the URL, so a link reproduces
 * the question) → a validated solve request, with per-field messages. Three questions share the
 * page (`question=imaging|beam|afocal`, see `$lib/solver/form-fields`); the beam question has
 * presets (`preset=focus|collimate|fibre|waist`) that fill the same request with their own words.
 * Lengths may carry units ("2 in", "25.4 mm", "0.3 m", "20 µm"), wavelengths too ("632.8 nm",
 * "1.064 um"), powers "W", "mW" or "kW": parsed with mathjs `unit()` behind a strict regex,
 * never `evaluate()`.
 */
import { unit } from 'mathjs';
import type { z } from 'zod';
import {
	afocalRequestSchema,
	beamRequestSchema,
	imagingRequestSchema,
	magnificationFromSizes,
	naFromFNumber,
	type ParsedAfocalRequest,
	type ParsedBeamRequest,
	type ParsedImagingRequest
} from '$lib/solver/request';
import {
	AFOCAL_DEFAULTS,
	AFOCAL_FIELD_OF_API,
	BEAM_DEFAULTS,
	IMAGING_DEFAULTS,
	IMAGING_FIELD_OF_API,
	PRESET_KEY,
	QUESTION_KEY,
	formFieldOf,
	isBeamPreset,
	isQuestion,
	type AfocalValues,
	type BeamPreset,
	type BeamValues,
	type ImagingValues
} from '$lib/solver/form-fields';
import { marcuseRangeProblem, modeFieldDiameterMm, normalisedFrequency } from '$lib/optics/fibre';
import { zodFields } from '$lib/server/errors';

/** The imaging fields, as text, with their defaults (the wavelength: the lab's, see `formDefaults`). */
export const FORM_DEFAULTS = IMAGING_DEFAULTS;
export type FormValues = ImagingValues;

/** The defaults with the lab's default wavelength (set on /admin/settings). */
export const formDefaults = (labWavelengthNm: number): FormValues => ({ ...FORM_DEFAULTS, wavelength: `${labWavelengthNm} nm` });

const QUANTITY = /^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:e[+-]?\d+)?)\s*(mm|cm|m|in|inch|inches|um|µm|μm|nm)?\s*$/i;
const UNIT_NAME: Record<string, string> = { mm: 'mm', cm: 'cm', m: 'm', in: 'inch', inch: 'inch', inches: 'inch', um: 'um', µm: 'um', μm: 'um', nm: 'nm' };

/** The typographic minus (U+2212, as the page's own hints write it) and dashes people paste, read as '-'. */
const asciiMinus = (text: string) => text.replace(/[\u2212\u2012\u2013]/g, '-');

/** A length or wavelength text → number in `target` ('mm' or 'nm'); null when it does not parse. */
export function parseQuantity(text: string, target: 'mm' | 'nm'): number | null {
	const m = QUANTITY.exec(asciiMinus(text));
	if (!m) return null;
	const value = Number(m[1]);
	const u = m[2] ? UNIT_NAME[m[2].toLowerCase()] : target;
	try {
		return unit(value, u).toNumber(target);
	} catch {
		return null;
	}
}

const plain = (raw: string): number | null => {
	const text = asciiMinus(raw);
	return /^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:e[+-]?\d+)?\s*$/i.test(text) ? Number(text) : null;
};

/**
 * Reads the form from URL parameters; `submitted` is false when the URL holds no question. Fields
 * the URL leaves out take `defaults` (the page passes the lab's default wavelength).
 */
export function readForm(
	params: URLSearchParams,
	defaults: FormValues = FORM_DEFAULTS
): {
	values: FormValues;
	submitted: boolean;
	errors: Record<string, string>;
	request: ParsedImagingRequest | null;
} {
	const values = { ...defaults };
	let submitted = false;
	for (const k of Object.keys(FORM_DEFAULTS) as (keyof FormValues)[]) {
		const v = params.get(k);
		if (v !== null) {
			values[k] = v.slice(0, 60);
			submitted = true;
		}
	}
	if (!submitted) return { values, submitted, errors: {}, request: null };
	const errors: Record<string, string> = {};
	const length = (key: keyof FormValues, label: string, optional = false) => {
		if (optional && values[key].trim() === '') return undefined;
		const n = parseQuantity(values[key], 'mm');
		if (n === null) errors[key] = `${label}: enter a length such as "25 mm" or "1 in".`;
		return n ?? undefined;
	};
	const objectHeightMm = length('objectHeight', 'Object height');
	const trackMm = length('track', 'Track');
	// Blank means none (0), as the default.
	const trackToleranceMm = values.trackTolerance.trim() === '' ? 0 : length('trackTolerance', 'Track tolerance');
	const minGapMm = length('minGap', 'Minimum gap');
	const minWorkingDistanceMm = length('minWd', 'Minimum working distance');
	let magnification: number | undefined;
	if (values.objectSize.trim() || values.imageSize.trim()) {
		const o = length('objectSize', 'Object size'),
			i = length('imageSize', 'Image size');
		const m = o !== undefined && i !== undefined ? magnificationFromSizes(o, i) : null;
		if (m === null && !errors.objectSize && !errors.imageSize) errors.imageSize = 'Give both sizes, larger than 0, or a magnification instead.';
		magnification = m ?? undefined;
		// The sizes decide the magnification: the field shows the one used, not a different number typed before.
		if (m !== null) values.magnification = String(Number(m.toPrecision(6)));
	} else {
		const m = plain(values.magnification);
		if (m === null) errors.magnification = 'Enter a magnification such as -0.5 (negative: inverted image).';
		magnification = m ?? undefined;
	}
	let objectNA: number | undefined;
	if (values.fNumber.trim()) {
		const n = plain(values.fNumber);
		const na = n === null ? null : naFromFNumber(n);
		if (na === null) errors.fNumber = 'Enter an object-side f-number above 0.5, or an NA instead.';
		objectNA = na ?? undefined;
	} else {
		const na = plain(values.na);
		if (na === null) errors.na = 'Enter the object-side NA, such as 0.05.';
		objectNA = na ?? undefined;
	}
	const wavelengthNm = parseQuantity(values.wavelength, 'nm');
	if (wavelengthNm === null) errors.wavelength = 'Enter a wavelength such as "632.8 nm" or "1.064 um".';
	// The schema checks every field that did parse (ranges, m ≠ 0, NA < 1) in the same pass, so the
	// page shows every field's problem at once; a field's own parse message wins over the schema's.
	const checked = imagingRequestSchema.safeParse({
		mode: 'imaging',
		wavelengthNm: wavelengthNm ?? undefined,
		trackMm,
		trackToleranceMm,
		magnification,
		objectHeightMm,
		objectNA,
		minGapMm,
		minWorkingDistanceMm,
		availableOnly: values.available !== 'false',
		inCoatingBandOnly: values.coating === 'band',
		maxElements: values.maxParts === '1' ? 1 : 2,
		rankBy: values.rankBy === 'band' ? 'band' : 'monochromatic'
	});
	if (checked.success && !Object.keys(errors).length) return { values, submitted, errors, request: checked.data };
	if (!checked.success) {
		// Sizes, when given, decide the magnification; an f-number, when given, the NA.
		const map: Record<string, keyof FormValues> = {
			...IMAGING_FIELD_OF_API,
			magnification: values.objectSize.trim() || values.imageSize.trim() ? 'imageSize' : 'magnification',
			objectNA: values.fNumber.trim() ? 'fNumber' : 'na'
		};
		const parseFailed = new Set(Object.keys(errors));
		// A field that did not parse was sent as undefined: the schema's "required" message for it adds nothing.
		for (const [k, msg] of Object.entries(zodFields(checked.error))) {
			const field = map[k] ?? k;
			const sizesFailed = field === 'imageSize' && (parseFailed.has('objectSize') || parseFailed.has('imageSize'));
			if (!parseFailed.has(field) && !sizesFailed && !errors[field]) errors[field] = msg;
		}
	}
	return { values, submitted, errors, request: null };
}


/** A power text ("0.5 W", "20 mW", "1.2 kW"; a bare number is in W) → W; null when it does not parse. */
export function parsePowerW(text: string): number | null {
	const m = /^\s*((?:\d+(?:\.\d*)?|\.\d+)(?:e[+-]?\d+)?)\s*(mw|w|kw)?\s*$/i.exec(text);
	if (!m) return null;
	const factor = { mw: 1e-3, w: 1, kw: 1e3 }[(m[2] ?? 'w').toLowerCase() as 'mw' | 'w' | 'kw'];
	return Number(m[1]) * factor;
}

/** What every question's reader returns: the form's text, its messages, and the request when all is well. */
export interface FormResult<V, R> {
	values: V;
	submitted: boolean;
	errors: Record<string, string>;
	request: R | null;
	/** Beam power, W, when given (for the irradiance at the focus); not part of the solve request. */
	powerW: number | null;
}

export type BeamRequest = ParsedBeamRequest;
export type AfocalRequest = ParsedAfocalRequest;
export type ImagingRequest = ParsedImagingRequest;

/** The whole /build form: which question, its preset, and that question's reading. */
export type BuildForm =
	| ({ question: 'imaging'; preset: null } & FormResult<ImagingValues, ImagingRequest>)
	| ({ question: 'beam'; preset: BeamPreset } & FormResult<BeamValues, BeamRequest>)
	| ({ question: 'afocal'; preset: null } & FormResult<AfocalValues, AfocalRequest>);

/** Copies the URL's text into `values` (only keys the question has); true when any was there. */
function take<V extends Record<string, string>>(params: URLSearchParams, values: V): boolean {
	let submitted = false;
	for (const k of Object.keys(values) as (keyof V & string)[]) {
		const v = params.get(k);
		if (v !== null) {
			(values as Record<string, string>)[k] = v.slice(0, 60);
			submitted = true;
		}
	}
	return submitted;
}

/** Field readers that write their message into `errors` and return undefined when the text does not parse. */
function readers(values: Record<string, string>, errors: Record<string, string>) {
	return {
		length(key: string, label: string, optional = false): number | undefined {
			if (optional && values[key].trim() === '') return undefined;
			const n = parseQuantity(values[key], 'mm');
			if (n === null) errors[key] = `${label}: enter a length such as "25 mm", "20 µm" or "1 in".`;
			return n ?? undefined;
		},
		number(key: string, message: string): number | undefined {
			const n = plain(values[key]);
			if (n === null) errors[key] = message;
			return n ?? undefined;
		},
		wavelength(): number | undefined {
			const n = parseQuantity(values.wavelength, 'nm');
			if (n === null) errors.wavelength = 'Enter a wavelength such as "1064 nm" or "1.064 um".';
			return n ?? undefined;
		},
		power(): number | null {
			if (!values.power?.trim()) return null;
			const p = parsePowerW(values.power);
			if (p === null || !(p > 0)) errors.power = 'Enter a power above 0 such as "0.5 W" or "20 mW", or leave it empty.';
			return p !== null && p > 0 ? p : null;
		}
	};
}

/**
 * Runs the schema over `candidate` and adds its messages to the fields (by `fieldOf`) that parsed;
 * a field's own parse message wins, and a field that did not parse gets no "required" on top.
 */
function check<S extends z.ZodType>(
	schema: S,
	candidate: Record<string, unknown>,
	errors: Record<string, string>,
	fieldOf: (apiField: string) => string
): z.output<S> | null {
	const checked = schema.safeParse(candidate);
	if (checked.success && !Object.keys(errors).length) return checked.data;
	if (!checked.success) {
		const parseFailed = new Set(Object.keys(errors));
		for (const [k, msg] of Object.entries(zodFields(checked.error))) {
			const field = fieldOf(k);
			if (!parseFailed.has(field) && !errors[field]) errors[field] = msg;
		}
	}
	return null;
}

/**
 * The fibre that is the source of "collimate": its mode field diameter as given, or from core
 * diameter and NA (Marcuse, in the optics core). Writes messages under `mfd`, `core` or `fibreNa`.
 */
function sourceModeField(values: BeamValues, errors: Record<string, string>, wavelengthNm: number | undefined): number | undefined {
	const r = readers(values, errors);
	if (values.mfd.trim()) return r.length('mfd', 'Mode field diameter');
	if (!values.core.trim() && !values.fibreNa.trim()) {
		errors.mfd = 'Give the fibre\'s mode field diameter, or its core diameter and NA.';
		return undefined;
	}
	const core = r.length('core', 'Core diameter');
	const na = r.number('fibreNa', 'Enter the fibre\'s NA, such as 0.12.');
	if (core === undefined || na === undefined || wavelengthNm === undefined) return undefined;
	if (!(core > 0)) errors.core = 'The core diameter must be larger than 0 mm.';
	if (!(na > 0 && na < 1)) errors.fibreNa = 'The fibre NA must be above 0 and below 1.';
	if (errors.core || errors.fibreNa) return undefined;
	const why = marcuseRangeProblem(normalisedFrequency(core, na, wavelengthNm), wavelengthNm);
	if (why) {
		errors.core = why;
		return undefined;
	}
	return modeFieldDiameterMm({ coreDiameterMm: core, numericalAperture: na }, wavelengthNm) ?? undefined;
}

/** The fibre that is the target of "into a fibre", as the request takes it (the solver applies Marcuse). */
function targetFibre(values: BeamValues, errors: Record<string, string>) {
	const r = readers(values, errors);
	if (values.mfd.trim()) return { modeFieldDiameterMm: r.length('mfd', 'Mode field diameter') };
	if (!values.core.trim() && !values.fibreNa.trim()) {
		errors.mfd = 'Give the fibre\'s mode field diameter, or its core diameter and NA.';
		return {};
	}
	return { coreDiameterMm: r.length('core', 'Core diameter'), numericalAperture: r.number('fibreNa', 'Enter the fibre\'s NA, such as 0.12.') };
}

/** "Shape a laser beam": the preset decides which fields describe the input and the target waist. */
export function readBeamForm(params: URLSearchParams, preset: BeamPreset): FormResult<BeamValues, BeamRequest> {
	const values = { ...BEAM_DEFAULTS[preset] };
	const submitted = take(params, values);
	if (!submitted) return { values, submitted, errors: {}, request: null, powerW: null };
	const errors: Record<string, string> = {};
	const r = readers(values, errors);
	const wavelengthNm = r.wavelength();
	const input =
		preset === 'collimate'
			? { waistDiameterMm: sourceModeField(values, errors, wavelengthNm), waistPositionMm: r.length('inAt', 'Fibre end'), mSquared: 1 }
			: {
					waistDiameterMm: r.length('inD', 'Beam diameter'),
					waistPositionMm: r.length('inAt', 'Waist position'),
					mSquared: r.number('m2', 'Enter M², such as 1 or 1.3.')
				};
	const at = r.length('outAt', preset === 'fibre' ? 'Fibre face' : preset === 'focus' ? 'Focus' : 'Waist position');
	const target =
		preset === 'fibre'
			? { waistPositionMm: at, fibre: targetFibre(values, errors) }
			: { waistPositionMm: at, waistDiameterMm: r.length('outD', preset === 'focus' ? 'Spot diameter' : 'Beam diameter') };
	const minEffPercent = r.number('minEff', 'Enter the smallest efficiency in %, such as 80.');
	const powerW = r.power();
	const fibreField = values.mfd.trim() ? 'mfd' : 'core';
	const request = check(
		beamRequestSchema,
		{
			mode: 'beam',
			wavelengthNm,
			input,
			target,
			maxElements: values.maxParts === '1' ? 1 : 2,
			minGapMm: r.length('minGap', 'Minimum gap'),
			minWorkingDistanceMm: r.length('minWd', 'Minimum working distance'),
			minClearance: r.number('clearance', 'Enter a clearance factor, such as 1.5.'),
			minEfficiency: minEffPercent === undefined ? undefined : minEffPercent / 100,
			powerW: powerW ?? undefined,
			availableOnly: values.available !== 'false',
			inCoatingBandOnly: values.coating === 'band'
		},
		errors,
		(k) => formFieldOf('beam', k, preset, fibreField)
	);
	// The request speaks of a fraction (0.8); the field is in %.
	if (errors.minEff && minEffPercent !== undefined) errors.minEff = 'The smallest efficiency must be above 0 % and at most 100 %.';
	return { values, submitted, errors, request, powerW };
}

/** "Expand a beam": an afocal pair for a collimated beam. The tolerance is typed in % (2 = ±2 %). */
export function readAfocalForm(params: URLSearchParams): FormResult<AfocalValues, AfocalRequest> {
	const values = { ...AFOCAL_DEFAULTS };
	const submitted = take(params, values);
	if (!submitted) return { values, submitted, errors: {}, request: null, powerW: null };
	const errors: Record<string, string> = {};
	const r = readers(values, errors);
	const tolerancePercent = r.number('tolerance', 'Enter a tolerance in %, such as 2.');
	const request = check(
		afocalRequestSchema,
		{
			mode: 'afocal',
			wavelengthNm: r.wavelength(),
			expansion: r.number('expansion', 'Enter the expansion, such as 5 (or 0.2 to reduce).'),
			expansionTolerance: tolerancePercent === undefined ? undefined : tolerancePercent / 100,
			inputBeamDiameterMm: r.length('inD', 'Input beam diameter'),
			maxLengthMm: r.length('maxLength', 'Longest setup'),
			intermediateFocus: values.focus === 'focus' ? true : values.focus === 'none' ? false : undefined,
			minGapMm: r.length('minGap', 'Minimum gap'),
			minClearance: r.number('clearance', 'Enter a clearance factor, such as 1.5.'),
			availableOnly: values.available !== 'false',
			inCoatingBandOnly: values.coating === 'band'
		},
		errors,
		(k) => AFOCAL_FIELD_OF_API[k] ?? k
	);
	return { values, submitted, errors, request, powerW: r.power() };
}

/** The question and preset named in the URL (imaging and focus when it names none or an unknown one). */
export function questionOf(params: URLSearchParams): { question: 'imaging' | 'beam' | 'afocal'; preset: BeamPreset } {
	const q = params.get(QUESTION_KEY);
	const p = params.get(PRESET_KEY);
	return { question: isQuestion(q) ? q : 'imaging', preset: isBeamPreset(p) ? p : 'focus' };
}

/** Reads the /build URL for whichever question it asks. */
export function readBuildForm(params: URLSearchParams, labWavelengthNm: number): BuildForm {
	const { question, preset } = questionOf(params);
	if (question === 'beam') return { question, preset, ...readBeamForm(params, preset) };
	if (question === 'afocal') return { question, preset: null, ...readAfocalForm(params) };
	return { question, preset: null, ...readForm(params, formDefaults(labWavelengthNm)), powerW: null };
}
