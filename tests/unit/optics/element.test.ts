import { describe, expect, it } from 'vitest';
import {
	buildElement,
	blackBoxElement,
	reverseElement,
	reverseSurfaces,
	elementCardinalPoints,
	cardinalPoints,
	thicknessesAtHeight,
	refractiveIndex,
	determinant,
	imageAfter,
	multiply,
	translation,
	create,
	approxEqual,
	matApproxEqual,
	type ThickElement
} from '../../../src/lib/optics';
import { element, singlet } from './helpers';

const LAMBDA = 587.5618;

/** Invented demo lenses (no catalogue data): [R1, R2, t, material]. */
const DEMO: [number | null, number | null, number, string][] = [
	[51.5, -51.5, 4.2, '517642'], // biconvex
	[38.6, null, 5.1, '517642'], // plano-convex, curved side first
	[null, -38.6, 5.1, 'fused-silica'], // plano-convex, curved side last
	[25.0, 60.0, 3.6, '785257'], // positive meniscus
	[-40.0, 40.0, 2.0, 'caf2'], // biconcave
	[120.0, 45.0, 6.0, '620364'] // negative meniscus
];

function cp(e: ThickElement) {
	const c = elementCardinalPoints(e);
	if (!c) throw new Error('afocal');
	return c;
}

describe('thick singlets against the textbook thick-lens formulas', () => {
	// Source: E. Hecht, Optics, 5th ed. (Pearson 2017), §6.1 "Thick Lenses and Lens
	// Systems": lensmaker's equation for a thick lens in air and the principal-plane
	// positions h1 = −f(n−1)d/(R2 n), h2 = −f(n−1)d/(R1 n) (equation numbers not quoted,
	// from memory). Flat surfaces enter as 1/R = 0.
	it.each(DEMO)('R1=%s R2=%s t=%s %s', (r1, r2, t, material) => {
		const n = refractiveIndex(material, LAMBDA);
		const k1 = r1 === null ? 0 : 1 / r1,
			k2 = r2 === null ? 0 : 1 / r2;
		const power = (n - 1) * (k1 - k2 + ((n - 1) * t * k1 * k2) / n);
		const f = 1 / power;
		const h1 = (-f * (n - 1) * t * k2) / n;
		const h2 = (-f * (n - 1) * t * k1) / n;
		const c = cp(element(singlet(r1, r2, t, material)));
		expect(approxEqual(c.eflMm, f, 1e-12)).toBe(true);
		expect(approxEqual(c.frontPrincipalMm, h1, 1e-10)).toBe(true);
		expect(approxEqual(c.backPrincipalMm, h2, 1e-10)).toBe(true);
		// BFL = f + h2 and FFL = f − h1 (the focal points lie f from the principal points).
		expect(approxEqual(c.bflMm, f + h2, 1e-10)).toBe(true);
		expect(approxEqual(c.fflMm, f - h1, 1e-10)).toBe(true);
	});

	it('the thin-lens lensmaker equation is the t → 0 limit (Hecht 5th ed. §5.2.3, from memory)', () => {
		const n = refractiveIndex('517642', LAMBDA);
		const f = cp(element(singlet(80, -120, 1e-6))).eflMm;
		expect(f).toBeCloseTo(1 / ((n - 1) * (1 / 80 + 1 / 120)), 5);
	});

	it('the plano-convex lens with its curved side first has H at the curved vertex and H′ t/n inside (Hecht §6.1)', () => {
		const n = refractiveIndex('517642', LAMBDA);
		const c = cp(element(singlet(38.6, null, 5.1)));
		expect(c.frontPrincipalMm).toBeCloseTo(0, 12);
		expect(c.backPrincipalMm).toBeCloseTo(-5.1 / n, 12);
	});
});

describe('Gaussian and Newtonian lens equations from the matrix', () => {
	// Source: Hecht, Optics, 5th ed. (2017), §5.2.3: Gaussian 1/so + 1/si = 1/f (distances
	// from the principal planes) and Newtonian xo·xi = f² (distances from the focal points);
	// they hold for thick lenses when measured from H, H′ and F, F′ (§6.1). From memory.
	it.each(DEMO.filter((d) => d[0] !== -40 && d[0] !== 120))('R1=%s R2=%s', (r1, r2, t, material) => {
		const e = element(singlet(r1, r2, t, material));
		const c = cp(e);
		for (const s of [1.5 * c.eflMm, 2 * c.eflMm, 3.7 * c.eflMm, 10 * c.eflMm]) {
			const m = multiply(create(), e.matrix, translation(create(), s));
			const img = imageAfter(m)!;
			const so = s + c.frontPrincipalMm; // object to H
			const si = img.imageDistanceMm - c.backPrincipalMm; // H′ to image
			expect(approxEqual(1 / so + 1 / si, 1 / c.eflMm, 1e-10)).toBe(true);
			const xo = so - c.eflMm,
				xi = si - c.eflMm;
			expect(approxEqual(xo * xi, c.eflMm ** 2, 1e-9)).toBe(true);
			// Lateral magnification −si/so (Hecht §5.2.3).
			expect(approxEqual(img.magnification, -si / so, 1e-10)).toBe(true);
		}
	});
});

describe('reversed orientation', () => {
	it('reverseSurfaces: opposite order, radii negated, media kept between the same surfaces', () => {
		const doublet = [
			{ radiusMm: 61.2, thicknessMm: 6, material: '517642' },
			{ radiusMm: -44.0, thicknessMm: 2.5, material: '620364' },
			{ radiusMm: -128.0 }
		];
		expect(reverseSurfaces(doublet)).toEqual([
			{ radiusMm: 128.0, thicknessMm: 2.5, material: '620364' },
			{ radiusMm: 44.0, thicknessMm: 6, material: '517642' },
			{ radiusMm: -61.2 }
		]);
		expect(reverseSurfaces(reverseSurfaces(doublet))).toEqual(doublet);
	});

	it('the reversed part has the matrix [[D, B], [C, A]] and the same EFL; twice reversed gives it back', () => {
		for (const [r1, r2, t, mat] of DEMO) {
			const e = element(singlet(r1, r2, t, mat));
			const r = reverseElement(e);
			const [a, b, c, d] = e.matrix;
			expect(matApproxEqual(r.matrix, [d, b, c, a], 1e-13)).toBe(true);
			expect(r.reversed).toBe(true);
			const rr = reverseElement(r);
			expect(matApproxEqual(rr.matrix, e.matrix, 1e-13)).toBe(true);
			expect(rr.prescription).toEqual(e.prescription);
			// The reversed part built directly gives the same matrix.
			const direct = element(singlet(r1, r2, t, mat), LAMBDA, null, true);
			expect(matApproxEqual(direct.matrix, r.matrix, 1e-13)).toBe(true);
		}
	});
});

describe('black-box parts from a datasheet (EFL, BFL, centre thickness)', () => {
	it('reproduces the EFL and BFL exactly and the FFL of the singlet it stands for to first order', () => {
		const real = element(singlet(51.5, -51.5, 4.2));
		const c = cp(real);
		const box = blackBoxElement({ eflMm: c.eflMm, bflMm: c.bflMm, centerThicknessMm: 4.2, material: '517642' }, LAMBDA);
		expect(box.ok).toBe(true);
		if (!box.ok) return;
		const b = cp(box.value);
		expect(b.eflMm).toBeCloseTo(c.eflMm, 10);
		expect(b.bflMm).toBeCloseTo(c.bflMm, 10);
		// The box assumes the principal planes t(1 − 1/n) apart; from Hecht's h1, h2 the real
		// separation is t(1 − 1/n) + f t² (n − 1)² / (n² R1 R2), so the FFLs differ by
		// exactly minus that second-order term (here about 1 % of t).
		const n = refractiveIndex('517642', LAMBDA);
		const second = (c.eflMm * 4.2 ** 2 * (n - 1) ** 2) / (n ** 2 * 51.5 * -51.5);
		expect(b.fflMm - c.fflMm).toBeCloseTo(-second, 10);
		expect(Math.abs(b.fflMm - c.fflMm)).toBeLessThan(0.012 * 4.2);
		expect(determinant(box.value.matrix)).toBeCloseTo(1, 14);
	});

	it('with the FFL given, all four cardinal points are exact', () => {
		const real = element(singlet(25.0, 60.0, 3.6, '785257'));
		const c = cp(real);
		const box = blackBoxElement({ eflMm: c.eflMm, bflMm: c.bflMm, fflMm: c.fflMm, centerThicknessMm: 3.6 }, LAMBDA);
		if (!box.ok) throw box.error;
		expect(matApproxEqual(box.value.matrix, real.matrix, 1e-12)).toBe(true);
	});

	it('rejects impossible numbers with a typed error', () => {
		const r = blackBoxElement({ eflMm: 0, bflMm: 10, centerThicknessMm: 2 }, LAMBDA);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('invalid-prescription');
	});

	it('follows the material dispersion like the real lens, to first order', () => {
		const spec = singlet(51.5, -51.5, 4.2, 'fused-silica');
		const c = cp(element(spec));
		const box = blackBoxElement(
			{ eflMm: c.eflMm, bflMm: c.bflMm, centerThicknessMm: 4.2, material: 'fused-silica', designWavelengthNm: LAMBDA },
			1064
		);
		if (!box.ok) throw box.error;
		const realAt1064 = cp(element(spec, 1064)).eflMm;
		expect(Math.abs(cp(box.value).eflMm - realAt1064) / realAt1064).toBeLessThan(1e-3);
	});
});

describe('measured EFL rescaling', () => {
	it('the rescaled part has exactly the measured EFL at the measurement wavelength', () => {
		const spec = singlet(51.5, -51.5, 4.2, 'fused-silica');
		const r = buildElement(spec, 632.8, { measured: { eflMm: 55.0, wavelengthNm: 632.8 } });
		if (!r.ok) throw r.error;
		expect(cp(r.value).eflMm).toBeCloseTo(55.0, 9);
		expect(r.value.curvatureScale).not.toBe(1);
	});

	it('at another wavelength it keeps the dispersion of the prescription (ratio of EFLs unchanged to first order)', () => {
		const spec = singlet(51.5, -51.5, 4.2, 'fused-silica');
		const nominal = (nm: number) => cp(element(spec, nm)).eflMm;
		const measured = nominal(632.8) * 1.01;
		const r = buildElement(spec, 1064, { measured: { eflMm: measured, wavelengthNm: 632.8 } });
		if (!r.ok) throw r.error;
		const ratio = cp(r.value).eflMm / nominal(1064);
		expect(ratio).toBeCloseTo(1.01, 3);
		// The rescaled surfaces stay consistent with the matrix (trace uses them).
		const rebuilt = buildElement(r.value.prescription!, 1064);
		if (!rebuilt.ok) throw rebuilt.error;
		expect(matApproxEqual(rebuilt.value.matrix, r.value.matrix, 1e-13)).toBe(true);
	});

	it('a measured EFL of the opposite sign is refused with a clear message', () => {
		const r = buildElement(singlet(51.5, -51.5, 4.2), LAMBDA, { measured: { eflMm: -50, wavelengthNm: LAMBDA } });
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.message).toMatch(/measured EFL/);
	});
});

describe('prescription validation', () => {
	const bad: [string, unknown][] = [
		['one surface', [{ radiusMm: 10 }]],
		['zero radius', [{ radiusMm: 0, thicknessMm: 2, material: '517642' }, { radiusMm: null }]],
		['negative thickness', [{ radiusMm: 20, thicknessMm: -1, material: '517642' }, { radiusMm: null }]],
		['thickness after the last surface', [{ radiusMm: 20, thicknessMm: 2, material: '517642' }, { radiusMm: null, thicknessMm: 3 }]]
	];
	it.each(bad)('%s → invalid-prescription', (_label, surfaces) => {
		const r = buildElement(surfaces as never, LAMBDA);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('invalid-prescription');
	});

	it('a clear aperture larger than a sphere is refused', () => {
		const r = buildElement(singlet(10, -10, 5), LAMBDA, { clearApertureMm: 25 });
		expect(r.ok).toBe(false);
	});

	it('an unknown material is a typed failure, not a throw', () => {
		const r = buildElement(singlet(20, null, 3, 'moonglass'), LAMBDA);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('unknown-material');
	});

	it('edge thickness of a biconvex lens at its rim: t − sag1 + sag2 (sag = R − √(R² − h²), common practice)', () => {
		const e = element(singlet(51.5, -51.5, 4.2), LAMBDA, 20);
		const sag = 51.5 - Math.sqrt(51.5 ** 2 - 100);
		expect(thicknessesAtHeight(e, 10)![0]).toBeCloseTo(4.2 - 2 * sag, 12);
	});

	it('cardinalPoints of an afocal matrix is null, not infinite', () => {
		expect(cardinalPoints([-1, 200, 0, -1])).toBeNull();
	});
});
