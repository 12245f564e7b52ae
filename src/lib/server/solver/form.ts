/**
 * The /build form: URL parameters (the form state lives in the URL, so a link reproduces
 * the question) → a validated solve request, with per-field messages. Lengths may carry
 * units ("2 in", "25.4 mm", "0.3 m"), wavelengths too ("632.8 nm", "1.064 um"): parsed
 * with mathjs `unit()` behind a strict regex, never `evaluate()`.
 */
import { unit } from 'mathjs';
import { solveRequestSchema, magnificationFromSizes, naFromFNumber, type ParsedSolveRequest } from '$lib/solver/request';
import { zodFields } from '$lib/server/api/http';

/** The form fields, as text, with their defaults (the wavelength: the lab's, see `formDefaults`). */
export const FORM_DEFAULTS = {
	objectHeight: '2 mm',
	track: '300 mm',
	magnification: '-0.5',
	objectSize: '',
	imageSize: '',
	na: '0.05',
	fNumber: '',
	wavelength: '587.6 nm',
	minGap: '1 mm',
	minWd: '5 mm',
	available: 'true',
	maxParts: '2'
};
export type FormValues = typeof FORM_DEFAULTS;

/** The defaults with the lab's default wavelength (set on /admin/settings). */
export const formDefaults = (labWavelengthNm: number): FormValues => ({ ...FORM_DEFAULTS, wavelength: `${labWavelengthNm} nm` });

const QUANTITY = /^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:e[+-]?\d+)?)\s*(mm|cm|m|in|inch|inches|um|µm|nm)?\s*$/i;
const UNIT_NAME: Record<string, string> = { mm: 'mm', cm: 'cm', m: 'm', in: 'inch', inch: 'inch', inches: 'inch', um: 'um', µm: 'um', nm: 'nm' };

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
	request: ParsedSolveRequest | null;
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
	const checked = solveRequestSchema.safeParse({
		wavelengthNm: wavelengthNm ?? undefined,
		trackMm,
		magnification,
		objectHeightMm,
		objectNA,
		minGapMm,
		minWorkingDistanceMm,
		availableOnly: values.available !== 'false',
		maxElements: values.maxParts === '1' ? 1 : 2
	});
	if (checked.success && !Object.keys(errors).length) return { values, submitted, errors, request: checked.data };
	if (!checked.success) {
		const map: Record<string, keyof FormValues> = {
			wavelengthNm: 'wavelength',
			trackMm: 'track',
			magnification: values.objectSize.trim() || values.imageSize.trim() ? 'imageSize' : 'magnification',
			objectHeightMm: 'objectHeight',
			objectNA: values.fNumber.trim() ? 'fNumber' : 'na',
			minGapMm: 'minGap',
			minWorkingDistanceMm: 'minWd'
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
