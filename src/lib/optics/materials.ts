/**
 * Refractive index n(λ) of the materials parts are made of.
 *
 * Two kinds of material:
 * - open crystalline and vitreous materials whose Sellmeier coefficients are published
 *   in the open literature (each with its paper and validity range below);
 * - optical glasses named by their six-digit glass code (ISO convention: the first three
 *   digits are (nd − 1)·1000, the last three vd·10, e.g. 517642 → nd = 1.517, vd = 64.2),
 *   with a two-term Cauchy dispersion fitted to nd and vd.
 *
 * - materials the lab adds from a supplier's datasheet (Sellmeier or Cauchy coefficients, the
 *   datasheet's range and its source), registered at run time with `setLabMaterials` by the
 *   server (`src/lib/server/catalogue/lab-materials.ts`), which keeps them in the database.
 *
 * Every model carries its formula (`kind`) and the range it is valid in: outside it there is no
 * index (`WavelengthOutOfRangeError`), never an extrapolation.
 *
 * All indices are relative to air, and air (material null) has n = 1 exactly.
 * Wavelengths are in nm at the API; the Sellmeier formulas below use µm internally.
 */
import {
	type Result,
	ok,
	fail,
	UnknownMaterialError,
	WavelengthOutOfRangeError,
	OpticsError,
	InvalidArgumentError
} from './errors';

/** Fraunhofer/ISO 7944 reference wavelength d (helium), nm. */
export const WAVELENGTH_D_NM = 587.5618;

/**
 * The default wavelength, nm: the d line as datasheets and forms write it. A part's design wavelength,
 * an imaging question's and the lab's default when none is set (common practice, no source).
 */
export const DEFAULT_WAVELENGTH_NM = 587.6;
/** Fraunhofer/ISO 7944 reference wavelength F (hydrogen), nm. */
export const WAVELENGTH_F_NM = 486.1327;
/** Fraunhofer/ISO 7944 reference wavelength C (hydrogen), nm. */
export const WAVELENGTH_C_NM = 656.2725;

/** Validity range of the glass-code Cauchy fit, nm (see `glassCodeModel`). */
export const GLASS_CODE_RANGE_NM: readonly [number, number] = [365, 1100];

/** A resolved material: its name, its formula's range and where the formula comes from. */
export interface MaterialModel {
	/** Canonical name, e.g. 'fused-silica' or '517642'. */
	readonly name: string;
	/** Which kind of formula gives n(λ). */
	readonly kind: 'sellmeier' | 'cauchy' | 'glass-code';
	/** Built into the optics core from the open literature, a glass code, or added by the lab. */
	readonly origin: 'open' | 'glass-code' | 'lab';
	/** Lowest wavelength (nm) at which the formula is valid. */
	readonly minNm: number;
	/** Highest wavelength (nm) at which the formula is valid. */
	readonly maxNm: number;
	/** Citation of the formula or a description of the fit. */
	readonly source: string;
	/**
	 * n at `wavelengthNm`, without the range check (callers go through
	 * `refractiveIndex`, which checks it).
	 */
	readonly indexUnchecked: (wavelengthNm: number) => number;
}

interface SellmeierSpec {
	readonly name: string;
	readonly aliases: readonly string[];
	readonly b: readonly [number, number, number];
	/** Resonance wavelengths λi in µm (the formula uses λi²). */
	readonly lambdaUm: readonly [number, number, number];
	readonly minNm: number;
	readonly maxNm: number;
	readonly source: string;
}

/**
 * Sellmeier form n² − 1 = Σ Bi·λ² / (λ² − λi²), λ in µm. Coefficients as printed in the
 * papers cited (values as widely reproduced; from memory, checked against the tabulated
 * indices in tests/unit/optics/materials.test.ts).
 */
const SELLMEIER: readonly SellmeierSpec[] = [
	{
		name: 'fused-silica',
		aliases: ['silica', 'fused silica', 'sio2'],
		b: [0.6961663, 0.4079426, 0.8974794],
		lambdaUm: [0.0684043, 0.1162414, 9.896161],
		minNm: 210,
		maxNm: 3710,
		source:
			'I. H. Malitson, "Interspecimen comparison of the refractive index of fused silica", ' +
			'J. Opt. Soc. Am. 55, 1205–1209 (1965); valid 0.21–3.71 µm at 20 °C.'
	},
	{
		name: 'caf2',
		aliases: ['calcium-fluoride', 'calcium fluoride', 'fluorite'],
		b: [0.5675888, 0.4710914, 3.8484723],
		lambdaUm: [0.050263605, 0.1003909, 34.64904],
		minNm: 230,
		maxNm: 9700,
		source:
			'I. H. Malitson, "A redetermination of some optical properties of calcium fluoride", ' +
			'Appl. Opt. 2, 1103–1107 (1963); valid 0.23–9.7 µm at 24 °C.'
	},
	{
		name: 'sapphire-o',
		aliases: ['sapphire', 'al2o3-o'],
		b: [1.4313493, 0.65054713, 5.3414021],
		lambdaUm: [0.0726631, 0.1193242, 18.028251],
		minNm: 200,
		maxNm: 5500,
		source:
			'I. H. Malitson and M. J. Dodge, "Refractive index and birefringence of synthetic sapphire", ' +
			'J. Opt. Soc. Am. 62, 1405 (1972), ordinary ray; valid 0.2–5.5 µm. Only the ordinary index: ' +
			'right for c-axis windows and lenses used along the axis.'
	}
];

function sellmeierModel(spec: SellmeierSpec): MaterialModel {
	const [b1, b2, b3] = spec.b;
	const l1 = spec.lambdaUm[0] ** 2,
		l2 = spec.lambdaUm[1] ** 2,
		l3 = spec.lambdaUm[2] ** 2;
	return {
		name: spec.name,
		kind: 'sellmeier',
		origin: 'open',
		minNm: spec.minNm,
		maxNm: spec.maxNm,
		source: spec.source,
		indexUnchecked(wavelengthNm: number): number {
			const x = (wavelengthNm / 1000) ** 2;
			return Math.sqrt(1 + (b1 * x) / (x - l1) + (b2 * x) / (x - l2) + (b3 * x) / (x - l3));
		}
	};
}

const BY_NAME = new Map<string, MaterialModel>();
for (const spec of SELLMEIER) {
	const model = sellmeierModel(spec);
	BY_NAME.set(spec.name, model);
	for (const alias of spec.aliases) BY_NAME.set(alias, model);
}

/** Canonical names of the open Sellmeier materials, for pickers and messages. */
export const OPEN_MATERIALS: readonly string[] = SELLMEIER.map((s) => s.name);

/**
 * The open materials as data, for listings: Sellmeier B_i and C_i = λ_i² (µm²), the range and the
 * paper. (The code keeps the resonance wavelengths λ_i as printed in the papers.)
 */
export function openMaterialSpecs(): LabMaterialSpec[] {
	return SELLMEIER.map((s) => ({
		code: s.name,
		name: s.name,
		formula: 'sellmeier' as const,
		b: [...s.b],
		c: s.lambdaUm.map((l) => l * l),
		minNm: s.minNm,
		maxNm: s.maxNm,
		source: s.source
	}));
}

/**
 * A material the lab adds from a datasheet. Sellmeier: n² − 1 = Σ B_i·λ²/(λ² − C_i), λ in µm, C_i in µm²
 * (the usual datasheet form); Cauchy: n = A + B/λ² + C/λ⁴ + … with `terms` = [A, B, C, …], λ in µm.
 */
export type LabMaterialSpec =
	| { code: string; name: string; formula: 'sellmeier'; b: number[]; c: number[]; minNm: number; maxNm: number; source: string }
	| { code: string; name: string; formula: 'cauchy'; terms: number[]; minNm: number; maxNm: number; source: string };

/** The model of a lab material (no checks: see `dispersionProblem`). */
export function labMaterialModel(spec: LabMaterialSpec): MaterialModel {
	let index: (wavelengthNm: number) => number;
	if (spec.formula === 'sellmeier') {
		const b = [...spec.b],
			c = [...spec.c];
		index = (wavelengthNm) => {
			const x = (wavelengthNm / 1000) ** 2;
			let n2 = 1;
			for (let i = 0; i < b.length; i++) n2 += (b[i] * x) / (x - c[i]);
			return Math.sqrt(n2);
		};
	} else {
		const t = [...spec.terms];
		index = (wavelengthNm) => {
			const inv = 1 / (wavelengthNm / 1000) ** 2;
			let n = 0,
				p = 1;
			for (const a of t) {
				n += a * p;
				p *= inv;
			}
			return n;
		};
	}
	return { name: spec.code, kind: spec.formula, origin: 'lab', minNm: spec.minNm, maxNm: spec.maxNm, source: spec.source, indexUnchecked: index };
}

/** Largest index any formula may give (no optical material in use comes near; common practice, no source). */
const MAX_PLAUSIBLE_INDEX = 5;

/**
 * Why a lab material's formula cannot be used over its stated range, or null: a pole of the
 * Sellmeier form inside the range, or an index that is not a finite number between 1 and 5 at any
 * of 400 wavelengths spread over it (with both ends).
 */
export function dispersionProblem(spec: LabMaterialSpec): string | null {
	if (!(spec.minNm > 0 && spec.maxNm > spec.minNm)) return 'The range must run from a lower to a higher wavelength.';
	if (spec.formula === 'sellmeier') {
		if (spec.b.length !== spec.c.length) return 'Give as many C as B coefficients.';
		const lo = (spec.minNm / 1000) ** 2,
			hi = (spec.maxNm / 1000) ** 2;
		const pole = spec.c.find((c) => c >= lo && c <= hi);
		if (pole !== undefined) return `C = ${pole} µm² puts a pole of the formula at ${Math.round(Math.sqrt(pole) * 1000)} nm, inside the range.`;
	}
	const model = labMaterialModel(spec);
	const steps = 400;
	for (let k = 0; k <= steps; k++) {
		const wl = spec.minNm + ((spec.maxNm - spec.minNm) * k) / steps;
		const n = model.indexUnchecked(wl);
		if (!Number.isFinite(n) || n <= 1 || n > MAX_PLAUSIBLE_INDEX) {
			return `The formula gives n = ${Number.isFinite(n) ? n.toFixed(4) : 'no number'} at ${Math.round(wl)} nm: an index must lie between 1 and ${MAX_PLAUSIBLE_INDEX} over the whole range.`;
		}
	}
	return null;
}

/** Lab materials by code (lower case), set by the server from the database. */
let LAB = new Map<string, MaterialModel>();

/**
 * Replaces the registered lab materials (the server calls it with every row of its table). Codes
 * that name an open material or look like a glass code are refused earlier, at the edge.
 */
export function setLabMaterials(specs: readonly LabMaterialSpec[]): void {
	const next = new Map<string, MaterialModel>();
	for (const s of specs) next.set(s.code.trim().toLowerCase(), labMaterialModel(s));
	LAB = next;
}

/** True when the name is an open material built into the core (or one of its aliases). */
export function isOpenMaterialName(name: string): boolean {
	return BY_NAME.has(name.trim().toLowerCase());
}

const GLASS_CODE = /^(\d{3})(\d{3})(?:\.\d+)?$/;

/**
 * The dispersion model of a glass given by nd and vd: a two-term Cauchy formula
 * n(λ) = a + b/λ², with b fixed by nF − nC = (nd − 1)/vd and a by n(λd) = nd.
 *
 * Why this form: it needs exactly the two numbers a glass code carries and has a closed
 * form. Validity 365–1100 nm, chosen and checked against the open Sellmeier materials
 * (tests/unit/optics/materials.test.ts): between F and C it is an interpolation within
 * about 2·10⁻⁴ of the true index; outside the visible it is an extrapolation that
 * ignores the infrared absorption of the glass and overestimates n by up to about
 * 2·10⁻³ near 1064 nm. Both are comparable to the ±5·10⁻⁴ rounding of nd in the
 * code itself; beyond 1100 nm the error grows fast, hence the limit.
 */
export function glassCodeModel(nd: number, vd: number, name = glassCodeName(nd, vd)): MaterialModel {
	if (!(nd > 1) || !(vd > 0) || !Number.isFinite(nd) || !Number.isFinite(vd)) {
		throw new InvalidArgumentError(`A glass needs nd > 1 and vd > 0 (got nd = ${nd}, vd = ${vd}).`);
	}
	const lf = (WAVELENGTH_F_NM / 1000) ** 2,
		lc = (WAVELENGTH_C_NM / 1000) ** 2,
		ld = (WAVELENGTH_D_NM / 1000) ** 2;
	const b = (nd - 1) / vd / (1 / lf - 1 / lc);
	const a = nd - b / ld;
	return {
		name,
		kind: 'glass-code',
		origin: 'glass-code',
		minNm: GLASS_CODE_RANGE_NM[0],
		maxNm: GLASS_CODE_RANGE_NM[1],
		source:
			`Glass code ${name} (nd = ${nd}, vd = ${vd}); two-term Cauchy fit to nd and nF − nC = (nd − 1)/vd ` +
			'at the ISO 7944 d, F, C lines; an extrapolation outside 486–656 nm.',
		indexUnchecked(wavelengthNm: number): number {
			const um = wavelengthNm / 1000;
			return a + b / (um * um);
		}
	};
}

function glassCodeName(nd: number, vd: number): string {
	return `${Math.round((nd - 1) * 1000)}${Math.round(vd * 10)}`;
}

/**
 * Parses a six-digit glass code ('517642', optionally with a density suffix as in
 * '517642.251') into nd and vd; null when the text is not a plausible code.
 */
export function parseGlassCode(code: string): { nd: number; vd: number } | null {
	const m = GLASS_CODE.exec(code.trim());
	if (!m) return null;
	// Parsed as decimal text, so 785 gives exactly the double nearest 1.785.
	const nd = Number(`1.${m[1]}`);
	const vd = Number(`${m[2].slice(0, 2)}.${m[2][2]}`);
	// No optical glass has vd below 10 or nd below 1.25 (common practice, no source).
	if (vd < 10 || nd < 1.25) return null;
	return { nd, vd };
}

/**
 * Glass-code models already made, by lower-cased name: a model is a pure function of its code (and read-only),
 * and a catalogue or an import names the same few codes over and over (two look-ups per validated part).
 * Bounded: cleared when full. Consulted after the open and lab materials, so those keep their precedence.
 */
const GLASS_CODE_MODELS = new Map<string, MaterialModel>();

/**
 * Resolves a material name (case and surrounding blanks ignored) to its model.
 * Throws `UnknownMaterialError` for a name that is neither an open material nor a code.
 */
export function resolveMaterial(material: string): MaterialModel {
	const key = material.trim().toLowerCase();
	const known = BY_NAME.get(key) ?? LAB.get(key);
	if (known) return known;
	const cached = GLASS_CODE_MODELS.get(key);
	if (cached) return cached;
	const code = parseGlassCode(key);
	if (code) {
		const model = glassCodeModel(code.nd, code.vd, key.slice(0, 6));
		if (GLASS_CODE_MODELS.size >= 1000) GLASS_CODE_MODELS.clear();
		GLASS_CODE_MODELS.set(key, model);
		return model;
	}
	if (/^\d{6}/.test(key)) throw new UnknownMaterialError(material, 'not a plausible glass code (vd < 10 or nd < 1.25)');
	throw new UnknownMaterialError(material);
}

/**
 * Refractive index (relative to air) of `material` at `wavelengthNm`; null material is
 * air (n = 1). Throws `UnknownMaterialError` ('unknown-material') or
 * `WavelengthOutOfRangeError` ('wavelength-out-of-range'); never returns NaN.
 */
export function refractiveIndex(material: string | null, wavelengthNm: number): number {
	if (!Number.isFinite(wavelengthNm) || wavelengthNm <= 0) {
		throw new InvalidArgumentError(`Wavelength must be a positive number of nm (got ${wavelengthNm}).`);
	}
	if (material === null) return 1;
	const model = resolveMaterial(material);
	if (wavelengthNm < model.minNm || wavelengthNm > model.maxNm) {
		throw new WavelengthOutOfRangeError(model.name, wavelengthNm, model.minNm, model.maxNm);
	}
	return model.indexUnchecked(wavelengthNm);
}

/** `refractiveIndex` as a typed result instead of an exception. */
export function tryRefractiveIndex(material: string | null, wavelengthNm: number): Result<number> {
	try {
		return ok(refractiveIndex(material, wavelengthNm));
	} catch (e) {
		if (e instanceof OpticsError) return fail(e);
		throw e;
	}
}

/**
 * Abbe number vd = (nd − 1)/(nF − nC) of a material, from its own dispersion formula;
 * for a glass code it returns the coded vd (up to rounding).
 */
export function abbeNumber(material: string): number {
	const nd = refractiveIndex(material, WAVELENGTH_D_NM);
	return (nd - 1) / (refractiveIndex(material, WAVELENGTH_F_NM) - refractiveIndex(material, WAVELENGTH_C_NM));
}
