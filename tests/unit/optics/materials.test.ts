import { describe, expect, it } from 'vitest';
import {
	refractiveIndex,
	tryRefractiveIndex,
	resolveMaterial,
	parseGlassCode,
	glassCodeModel,
	abbeNumber,
	OpticsError,
	UnknownMaterialError,
	WavelengthOutOfRangeError,
	WAVELENGTH_C_NM,
	WAVELENGTH_D_NM,
	WAVELENGTH_F_NM
} from '../../../src/lib/optics';

describe('Sellmeier indices against published values', () => {
	// Source: I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965), fused silica; tabulated
	// indices at the lines used there and as widely reproduced (five decimals, from memory).
	const silica: [number, number][] = [
		[365.015, 1.47454], // Hg i line
		[435.834, 1.46669], // Hg g line
		[486.1327, 1.46313], // H F line
		[546.074, 1.46008], // Hg e line
		[587.5618, 1.45846], // He d line
		[632.8, 1.45702], // He-Ne laser line
		[656.2725, 1.45637], // H C line
		[1013.98, 1.45024], // Hg t line
		[1064, 1.44963] // Nd:YAG
	];
	it.each(silica)('fused silica at %f nm is %f (Malitson 1965, from memory)', (nm, n) => {
		expect(refractiveIndex('fused-silica', nm)).toBeCloseTo(n, 4.7);
	});

	// Source: I. H. Malitson, Appl. Opt. 2, 1103 (1963), calcium fluoride; values as widely
	// tabulated (from memory). nd = 1.43385 and vd ≈ 95.0 are the handbook figures for CaF2.
	const caf2: [number, number][] = [
		[486.1327, 1.43702],
		[587.5618, 1.43385],
		[656.2725, 1.43246],
		[1064, 1.42848],
		[1550, 1.42602]
	];
	it.each(caf2)('CaF2 at %f nm is %f (Malitson 1963, from memory)', (nm, n) => {
		expect(refractiveIndex('caf2', nm)).toBeCloseTo(n, 4.5);
	});

	it('CaF2 Abbe number is about 95 and fused silica about 67.8 (handbook values, from memory)', () => {
		expect(abbeNumber('caf2')).toBeGreaterThan(94.5);
		expect(abbeNumber('caf2')).toBeLessThan(95.5);
		expect(abbeNumber('fused-silica')).toBeCloseTo(67.8, 0.7);
	});

	it('sapphire ordinary index at the d line is 1.7682 (Malitson & Dodge 1972, from memory)', () => {
		expect(refractiveIndex('sapphire-o', WAVELENGTH_D_NM)).toBeCloseTo(1.7682, 3.5);
	});

	it('accepts aliases and ignores case and blanks', () => {
		expect(refractiveIndex(' Calcium-Fluoride ', 600)).toBe(refractiveIndex('caf2', 600));
		expect(resolveMaterial('SiO2').name).toBe('fused-silica');
	});

	it('air (null material) is exactly 1', () => {
		expect(refractiveIndex(null, 1064)).toBe(1);
	});
});

describe('glass codes', () => {
	it('parses the ISO six-digit code (517642 → nd 1.517, vd 64.2), with an optional density suffix', () => {
		expect(parseGlassCode('517642')).toEqual({ nd: 1.517, vd: 64.2 });
		expect(parseGlassCode('785257.352')).toEqual({ nd: 1.785, vd: 25.7 });
		expect(parseGlassCode('51764')).toBeNull();
		expect(parseGlassCode('517005')).toBeNull(); // vd 0.5 is no glass
	});

	it('the fit reproduces nd at the d line and nF − nC = (nd − 1)/vd exactly (definition, ISO 7944 lines)', () => {
		for (const code of ['517642', '620364', '785257', '458678']) {
			const { nd, vd } = parseGlassCode(code)!;
			const n = (nm: number) => refractiveIndex(code, nm);
			expect(n(WAVELENGTH_D_NM)).toBeCloseTo(nd, 12);
			expect(n(WAVELENGTH_F_NM) - n(WAVELENGTH_C_NM)).toBeCloseTo((nd - 1) / vd, 12);
			expect(abbeNumber(code)).toBeCloseTo(vd, 9);
		}
	});

	it('the Cauchy fit stays within its stated error of a real Sellmeier glass (fused silica fitted from its own nd, vd)', () => {
		// Independent reference: the Malitson 1965 formula. Stated in glassCodeModel: within
		// about 2e-4 between F and C, about 2e-3 at the ends of 365–1100 nm.
		const nd = refractiveIndex('fused-silica', WAVELENGTH_D_NM);
		const vd = abbeNumber('fused-silica');
		const fit = glassCodeModel(nd, vd);
		for (const nm of [486.13, 550, 600, 656.27]) {
			expect(Math.abs(fit.indexUnchecked(nm) - refractiveIndex('fused-silica', nm))).toBeLessThan(2.5e-4);
		}
		for (const nm of [365, 400, 800, 1064, 1100]) {
			expect(Math.abs(fit.indexUnchecked(nm) - refractiveIndex('fused-silica', nm))).toBeLessThan(2.5e-3);
		}
		// And it is genuinely an extrapolation: beyond 1100 nm the error keeps growing.
		expect(Math.abs(fit.indexUnchecked(1550) - refractiveIndex('fused-silica', 1550))).toBeGreaterThan(3e-3);
	});
});

describe('typed errors, never NaN', () => {
	it('unknown material → UnknownMaterialError with code unknown-material', () => {
		expect(() => refractiveIndex('unobtainium', 550)).toThrow(UnknownMaterialError);
		const r = tryRefractiveIndex('unobtainium', 550);
		expect(r.ok).toBe(false);
		if (!r.ok) {
			expect(r.error).toBeInstanceOf(OpticsError);
			expect(r.error.code).toBe('unknown-material');
			expect(r.error.message).toContain('unobtainium');
		}
	});

	it('wavelength outside the validity range → WavelengthOutOfRangeError with the range in the message', () => {
		// Malitson 1965 is valid 0.21–3.71 µm.
		expect(() => refractiveIndex('fused-silica', 200)).toThrow(WavelengthOutOfRangeError);
		expect(() => refractiveIndex('fused-silica', 4000)).toThrow(/210–3710 nm/);
		const r = tryRefractiveIndex('517642', 1550);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('wavelength-out-of-range');
	});

	it('a non-positive or non-finite wavelength is an invalid argument, not NaN', () => {
		for (const nm of [0, -5, NaN, Infinity]) {
			const r = tryRefractiveIndex('caf2', nm);
			expect(r.ok).toBe(false);
			if (!r.ok) expect(r.error.code).toBe('invalid-argument');
		}
	});
});
