/**
 * Materials the lab adds from a datasheet (Sellmeier or Cauchy), checked against published indices.
 * The open fused silica coefficients typed as a datasheet gives them (B_i and C_i = λ_i² in µm²) must
 * give the same indices as the built-in model and as Malitson's table.
 */
import { afterEach, describe, expect, it } from 'vitest';
import {
	dispersionProblem,
	labMaterialModel,
	openMaterialSpecs,
	refractiveIndex,
	resolveMaterial,
	setLabMaterials,
	WavelengthOutOfRangeError,
	type LabMaterialSpec
} from '../../../src/lib/optics';

/**
 * Source: I. H. Malitson, "Interspecimen comparison of the refractive index of fused silica",
 * J. Opt. Soc. Am. 55, 1205–1209 (1965): Sellmeier coefficients B = 0.6961663, 0.4079426, 0.8974794,
 * λ_i = 0.0684043, 0.1162414, 9.896161 µm, and the tabulated indices below (five decimals, from memory).
 */
const SILICA: LabMaterialSpec = {
	code: 'tw-silica-test',
	name: 'Fused silica typed from the paper',
	formula: 'sellmeier',
	b: [0.6961663, 0.4079426, 0.8974794],
	c: [0.0684043 ** 2, 0.1162414 ** 2, 9.896161 ** 2],
	minNm: 210,
	maxNm: 3710,
	source: 'Malitson, J. Opt. Soc. Am. 55, 1205 (1965)'
};
const MALITSON: [number, number][] = [
	[365.015, 1.47454],
	[587.5618, 1.45846],
	[1064, 1.44963],
	[1529.58, 1.44427],
	[2325.42, 1.43293]
];

afterEach(() => setLabMaterials([]));

describe('lab materials', () => {
	it.each(MALITSON)('Sellmeier as typed from a datasheet: fused silica at %f nm is %f (Malitson 1965, from memory)', (nm, n) => {
		expect(labMaterialModel(SILICA).indexUnchecked(nm)).toBeCloseTo(n, 4.7);
		expect(labMaterialModel(SILICA).indexUnchecked(nm)).toBeCloseTo(refractiveIndex('fused-silica', nm), 12);
	});

	it('the shipped open materials list their coefficients in the datasheet form, with their paper', () => {
		const silica = openMaterialSpecs().find((s) => s.code === 'fused-silica')!;
		expect(silica.formula).toBe('sellmeier');
		expect(silica.source).toMatch(/Malitson.*J\. Opt\. Soc\. Am\. 55, 1205/);
		expect(labMaterialModel(silica).indexUnchecked(587.5618)).toBeCloseTo(1.45846, 4.7);
	});

	it('Cauchy: n = A + B/λ² + C/λ⁴ (λ in µm), checked by hand arithmetic', () => {
		// Invented coefficients; at λ = 0.5 µm: 1.5 + 0.004/0.25 + 0.0001/0.0625 = 1.5176.
		const spec: LabMaterialSpec = { code: 'tw-cauchy-test', name: 'Cauchy test', formula: 'cauchy', terms: [1.5, 0.004, 0.0001], minNm: 400, maxNm: 1600, source: 'invented for the test' };
		expect(labMaterialModel(spec).indexUnchecked(500)).toBeCloseTo(1.5176, 12);
	});

	it('registered materials resolve by code, keep their range and never extrapolate', () => {
		setLabMaterials([SILICA]);
		expect(resolveMaterial('TW-Silica-Test').origin).toBe('lab');
		expect(refractiveIndex('tw-silica-test', 1550)).toBeCloseTo(refractiveIndex('fused-silica', 1550), 12);
		expect(() => refractiveIndex('tw-silica-test', 4000)).toThrow(WavelengthOutOfRangeError);
		setLabMaterials([]);
		expect(() => resolveMaterial('tw-silica-test')).toThrow();
	});

	it('refuses a pole inside the range and an implausible index', () => {
		expect(dispersionProblem(SILICA)).toBeNull();
		expect(dispersionProblem({ ...SILICA, maxNm: 12000 })).toMatch(/pole .* at 9896 nm/);
		expect(dispersionProblem({ ...SILICA, b: [-2, 0, 0] })).toMatch(/between 1 and 5/);
		expect(dispersionProblem({ code: 'x', name: 'x', formula: 'cauchy', terms: [0.9, 0.001], minNm: 400, maxNm: 700, source: 'x' })).toMatch(/n = 0\.9/);
	});
});
