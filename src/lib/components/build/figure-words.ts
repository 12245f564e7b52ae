/**
 * The figures of an imaging answer as label/value lines, for the saved setup page and the build
 * sheet: the spot (RMS radius on axis and at the field edge, the Airy radius, their ratio), the
 * vignetting, and whatever further figures the answer carries (colour over a band, fractions of
 * the cone lost, the spot statistic): those are read from the answer as they are, named from
 * their field names and shown in the unit the name gives (…Mm, …Nm, …Mrad, …Fraction), so a
 * figure the solver adds shows up without a change here and nothing is shown that the answer
 * does not hold.
 */
import type { Solution } from '$lib/solver/types';

/** One line of figures. */
export interface FigureLine {
	/** Field path in the answer ("spot.axialRmsMm"), for tests and keys. */
	key: string;
	label: string;
	value: string;
}

const num = (x: number, d: number) => (Number.isFinite(x) ? x.toFixed(d) : '–');

/** A length in mm as µm below 1 mm, else mm. */
export function lengthText(mm: number): string {
	if (!Number.isFinite(mm)) return '–';
	return Math.abs(mm) < 1 ? `${num(mm * 1000, 1)} µm` : `${num(mm, 3)} mm`;
}

/** Words of a camelCase field name, its unit suffix left out: "axialLostFraction" → "axial lost fraction". */
export function fieldLabel(key: string): string {
	const words = key
		.replace(/(Mm|Nm|Mrad|Um)$/, '')
		.replace(/([a-z0-9])([A-Z])/g, '$1 $2')
		.toLowerCase();
	return words.charAt(0).toUpperCase() + words.slice(1);
}

/** A field's value in the unit its name gives; null when it is not a figure (an object). */
export function fieldValue(key: string, v: unknown): string | null {
	if (v === null || v === undefined) return '–';
	if (typeof v === 'boolean') return v ? 'yes' : 'no';
	if (typeof v === 'string') return v;
	if (typeof v === 'number') {
		if (/Mm$/.test(key)) return lengthText(v);
		if (/Nm$/.test(key)) return `${num(v, 1)} nm`;
		if (/Mrad$/.test(key)) return `${num(v, 3)} mrad`;
		if (/(Fraction|Lost|Share)$/.test(key) || /^fraction/.test(key)) return `${num(100 * v, 1)} %`;
		if (/(Ratio|ratio|Airy)/.test(key)) return `${num(v, 2)}×`;
		return Number.isFinite(v) ? String(Number(v.toPrecision(4))) : '–';
	}
	// A band or a pair of figures ([from, to]); longer lists (samples, ray data) are not figures.
	if (Array.isArray(v) && v.length >= 1 && v.length <= 3 && v.every((x) => typeof x === 'number')) {
		const unit = /Nm$/.test(key) ? ' nm' : /Mm$/.test(key) ? ' mm' : '';
		return v.map((x) => String(Number((x as number).toPrecision(5)))).join('–') + unit;
	}
	return null;
}

/** Labels of the figures the solver gives today (by field path); a figure added later is named from its field name. */
const LABELS: Record<string, string> = {
	'spot.statistic': 'Spot statistic',
	'vignetting.axialLostFraction': 'Share of the cone lost on axis',
	'vignetting.edgeLostFraction': 'Share of the cone lost at the field edge',
	'vignetting.edgeBlocked': 'Field edge blocked',
	'vignetting.tracedNA': 'Object-side NA traced',
	'vignetting.stop': 'Aperture stop',
	'colour.bandNm': 'Band (short, centre, long)',
	'colour.axialColourMm': 'Axial colour (focus, long end − short end)',
	'colour.axialRmsMm': 'RMS spot radius on axis over the band',
	'colour.edgeRmsMm': 'RMS spot radius at the field edge over the band',
	'colour.airyRadiusMm': 'Airy radius at the centre wavelength',
	'colour.ratioToAiry': 'Larger band RMS radius over the Airy radius'
};
/** Values that read better in words than as they are stored. */
const WORDS: Record<string, (v: unknown) => string | null> = {
	'spot.statistic': (v) => (v === 'rms-radius-about-centroid' ? 'RMS radius about the centroid, over a 2-D grid of rays' : null),
	'vignetting.tracedNA': (v) => (typeof v === 'number' ? num(v, 4) : null),
	'vignetting.stop': (v) => {
		const stop = v as { partIndex?: unknown; surface?: unknown } | null;
		return stop && typeof stop.partIndex === 'number' && typeof stop.surface === 'number' ? `part ${stop.partIndex + 1}, surface ${stop.surface}` : 'none found';
	}
};

/** Lines for every figure of `group` except `known` ones (nested objects one level down, labelled "outer: inner"). */
export function extraLines(prefix: string, group: unknown, known: ReadonlySet<string> = new Set()): FigureLine[] {
	if (group === null || typeof group !== 'object' || Array.isArray(group)) return [];
	const out: FigureLine[] = [];
	for (const [k, v] of Object.entries(group as Record<string, unknown>)) {
		if (known.has(k)) continue;
		const path = `${prefix}.${k}`;
		// A note that says nothing is not a figure.
		if (k === 'note' && (v === null || v === '')) continue;
		const worded = WORDS[path]?.(v) ?? null;
		const value = worded ?? fieldValue(k, v);
		if (value !== null) {
			out.push({ key: path, label: LABELS[path] ?? fieldLabel(k), value });
			continue;
		}
		if (v !== null && typeof v === 'object' && !Array.isArray(v)) {
			for (const [k2, v2] of Object.entries(v as Record<string, unknown>)) {
				const value2 = fieldValue(k2, v2);
				if (value2 !== null) out.push({ key: `${prefix}.${k}.${k2}`, label: `${fieldLabel(k)}: ${fieldLabel(k2).toLowerCase()}`, value: value2 });
			}
		}
	}
	return out;
}

const SPOT_KNOWN = new Set(['axialRmsMm', 'edgeRmsMm', 'airyRadiusMm', 'ratioToAiry', 'untracedReason', 'screenEstimateMm']);
const VIGNETTING_KNOWN = new Set(['axial', 'edge', 'worstFill']);
/** Fields of an answer that hold no figure for these lines (drawing data, parts, matrices, the tolerance view). */
const NOT_FIGURES = new Set([
	'mode',
	'rank',
	'elements',
	'objectDistanceMm',
	'gapsMm',
	'backDistanceMm',
	'trackMm',
	'trackOffsetMm',
	'magnification',
	'systemMatrix',
	'pointTransferMatrix',
	'afocalFamily',
	'doubleRoot',
	'spot',
	'vignetting',
	'rays',
	'tolerance'
]);

/** The spot lines: RMS radius on axis and at the field edge, Airy radius, their ratio, and any further spot figures. */
export function spotLines(s: Solution): FigureLine[] {
	const sp = s.spot;
	const traced = sp.axialRmsMm !== null;
	const lines: FigureLine[] = [
		{ key: 'spot.axialRmsMm', label: 'RMS spot radius on axis', value: traced ? lengthText(sp.axialRmsMm as number) : `not traced${sp.untracedReason ? ` (${sp.untracedReason})` : ''}` },
		{ key: 'spot.edgeRmsMm', label: 'RMS spot radius at the field edge', value: sp.edgeRmsMm === null ? (traced ? 'not available (the edge rays were lost)' : 'not traced') : lengthText(sp.edgeRmsMm) },
		{ key: 'spot.airyRadiusMm', label: 'Airy radius', value: lengthText(sp.airyRadiusMm) },
		{ key: 'spot.ratioToAiry', label: 'Larger RMS radius over the Airy radius', value: sp.ratioToAiry === null ? 'not traced' : `${num(sp.ratioToAiry, 2)}×` }
	];
	return [...lines, ...extraLines('spot', sp, SPOT_KNOWN)];
}

/** The vignetting lines: whether the cone is cut on axis and at the field edge, the fullest aperture, and any further figures (fractions lost). */
export function vignettingLines(s: Solution): FigureLine[] {
	const v = s.vignetting;
	if (!v) return [];
	return [
		{ key: 'vignetting.axial', label: 'Cone cut on axis', value: v.axial ? 'yes' : 'no' },
		{ key: 'vignetting.edge', label: 'Cone cut at the field edge', value: v.edge ? 'yes' : 'no' },
		{ key: 'vignetting.worstFill', label: 'Fullest clear aperture (ray height over clear semi-aperture)', value: `${num(v.worstFill, 2)}×` },
		...extraLines('vignetting', v, VIGNETTING_KNOWN)
	];
}

/** Further figure groups the answer carries (colour over a band and the like), each with its lines; empty when there are none. */
export function otherFigureGroups(s: Solution): { key: string; title: string; lines: FigureLine[] }[] {
	const out: { key: string; title: string; lines: FigureLine[] }[] = [];
	for (const [k, v] of Object.entries(s as unknown as Record<string, unknown>)) {
		if (NOT_FIGURES.has(k) || v === null || typeof v !== 'object' || Array.isArray(v)) continue;
		const lines = extraLines(k, v);
		if (lines.length) out.push({ key: k, title: fieldLabel(k), lines });
	}
	return out;
}
