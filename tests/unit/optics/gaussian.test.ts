/**
 * Gaussian beams in the optics core, against published formulas and worked values (source beside
 * each check), and the reduced-ray convention inside glass against an independent surface-by-surface
 * propagation with ordinary (non-reduced) matrices.
 */
import { describe, expect, it } from 'vitest';
import {
	propagateQ,
	translateQ,
	beamAt,
	rayleighRangeMm,
	qAtDistance,
	radiusAtQ,
	peakIrradianceWPerCm2,
	overlapFromQ,
	couplingEfficiency,
	marcuseRadiusRatio,
	modeFieldDiameterMm,
	normalisedFrequency,
	afocalGapMm,
	pairA,
	thinLens,
	translation,
	create,
	multiply,
	refractiveIndex,
	type BeamQ
} from '../../../src/lib/optics';
import { element, singlet } from './helpers';

const thin = (f: number) => thinLens(create(), 1 / f);

describe('ABCD law for q (H. Kogelnik and T. Li, "Laser beams and resonators", Applied Optics 5, 1550, 1966)', () => {
	// Section II, eqs. 17–18: w(z)² = w0²[1 + (λz/(πw0²))²], R(z) = z[1 + (πw0²/(λz))²]; here λ = 632.8 nm, w0 = 0.5 mm.
	const w0 = 0.5,
		lambda = 632.8;
	const zr = (Math.PI * w0 * w0) / (lambda * 1e-6); // 1241.2 mm
	it('free space: the matrix [[1, z], [0, 1]] gives the waist formulas at several distances', () => {
		expect(zr).toBeCloseTo(1241.16, 1);
		for (const z of [10, 500, 1241.16, 5000]) {
			const q = propagateQ({ re: 0, im: zr }, translation(create(), z))!;
			const b = beamAt(q, lambda);
			expect(b.radiusMm).toBeCloseTo(w0 * Math.sqrt(1 + ((lambda * 1e-6 * z) / (Math.PI * w0 * w0)) ** 2), 12);
			expect(b.wavefrontRadiusMm / (z * (1 + ((Math.PI * w0 * w0) / (lambda * 1e-6 * z)) ** 2))).toBeCloseTo(1, 12);
		}
		// At z = z_R the radius is √2·w0 and R = 2·z_R (worked from eqs. 17–18).
		const at = beamAt(translateQ({ re: 0, im: zr }, zr), lambda);
		expect(at.radiusMm).toBeCloseTo(Math.SQRT2 * w0, 12);
		expect(at.wavefrontRadiusMm).toBeCloseTo(2 * zr, 8);
	});
	it('thin lens: 1/q2 = 1/q1 − 1/f (eq. 25), by the matrix [[1, 0], [−1/f, 1]]', () => {
		const q1: BeamQ = { re: 300, im: 800 };
		const q2 = propagateQ(q1, thin(100))!;
		// 1/q1 − 1/f by hand, complex.
		const d = q1.re * q1.re + q1.im * q1.im;
		const invRe = q1.re / d - 1 / 100,
			invIm = -q1.im / d;
		const dd = invRe * invRe + invIm * invIm;
		expect(q2.re).toBeCloseTo(invRe / dd, 9);
		expect(q2.im).toBeCloseTo(-invIm / dd, 9);
	});
	it('a thick lens: the reduced vertex matrix gives the same q as ordinary matrices surface by surface (q in glass is n·q̂)', () => {
		const lam = 1064;
		const e = element(singlet(40, -60, 6, '517642'), lam);
		const n = refractiveIndex('517642', lam);
		const q1: BeamQ = { re: -150, im: 400 };
		const viaVertex = propagateQ(q1, e.matrix)!;
		// Ordinary matrices on (y, u): refraction [[1, 0], [(n − n′)/(n′R), n/n′]], translation [[1, t], [0, 1]], applied to q itself.
		const law = (q: BeamQ, a: number, b: number, c: number, d: number) => propagateQ(q, Float64Array.of(a, b, c, d))!;
		let q = law(q1, 1, 0, (1 - n) / (n * 40), 1 / n);
		q = law(q, 1, 6, 0, 1);
		q = law(q, 1, 0, (n - 1) / (1 * -60), n / 1);
		// propagateQ with indices 1→1 on the ordinary (det ≠ 1) matrices is the plain law q' = (Aq + B)/(Cq + D).
		expect(viaVertex.re).toBeCloseTo(q.re, 9);
		expect(viaVertex.im).toBeCloseTo(q.im, 9);
		// And the reduced form inside the glass: q̂ = q/n after the first surface.
		const r1 = multiply(create(), create(1, 0, -(n - 1) / 40, 1), create());
		const inGlass = propagateQ(q1, r1, 1, n)!;
		const ordinary = law(q1, 1, 0, (1 - n) / (n * 40), 1 / n);
		expect(inGlass.re).toBeCloseTo(ordinary.re, 9);
		expect(inGlass.im).toBeCloseTo(ordinary.im, 9);
	});
});

describe('thin-lens focusing (S. A. Self, "Focusing of spherical Gaussian beams", Applied Optics 22, 658, 1983)', () => {
	// Eq. 9: s′/f = 1 + (s/f − 1)/((s/f − 1)² + (z_R/f)²); eq. 10: m = 1/√((1 − s/f)² + (z_R/f)²). Worked values below.
	const f = 100;
	const image = (s: number, zr: number) => {
		const q = propagateQ({ re: s, im: zr }, thin(f))!; // input waist s before the lens
		return { sp: -q.re, m: Math.sqrt(q.im / zr) };
	};
	it('s = 2f, z_R = f: the waist lands at s′ = 1.5 f with m = 1/√2', () => {
		const r = image(200, 100);
		expect(r.sp).toBeCloseTo(150, 9);
		expect(r.m).toBeCloseTo(1 / Math.SQRT2, 12);
	});
	it('a waist at the front focal point goes to the back focal point, m = f/z_R', () => {
		const r = image(100, 40);
		expect(r.sp).toBeCloseTo(100, 9);
		expect(r.m).toBeCloseTo(100 / 40, 12);
	});
	it('the farthest waist is s′ = f + f²/(2 z_R), at s = f + z_R (Self\'s maximum image distance)', () => {
		const zr = 50;
		expect(image(f + zr, zr).sp).toBeCloseTo(f + (f * f) / (2 * zr), 9);
		expect(image(f + zr + 1, zr).sp).toBeLessThan(f + (f * f) / (2 * zr));
		expect(image(f + zr - 1, zr).sp).toBeLessThan(f + (f * f) / (2 * zr));
	});
	it('a collimated beam (z_R ≫ f) focuses at f to w0′ = λf/(πw0) (the usual focusing rule)', () => {
		const lambda = 1064,
			w0 = 2;
		const q = propagateQ(qAtDistance(w0, lambda, 0), thin(f))!;
		const b = beamAt(translateQ(q, -q.re), lambda);
		expect(b.waistRadiusMm / ((lambda * 1e-6 * f) / (Math.PI * w0))).toBeCloseTo(1, 4);
	});
});

describe('M² and the embedded Gaussian (A. E. Siegman, Lasers, 1986, section 17.1)', () => {
	it('M² = 2, W0 = 1 mm at 1064 nm: θ = M²λ/(πW0) = 0.677 mrad, z_R = πW0²/(M²λ) = 1476 mm, W(z_R) = √2·W0', () => {
		const zr = rayleighRangeMm(1, 1064, 2);
		expect(zr).toBeCloseTo(Math.PI / (2 * 1.064e-3), 9);
		expect(zr).toBeCloseTo(1476.3, 1);
		const at = beamAt({ re: zr, im: zr }, 1064, 2);
		expect(at.waistRadiusMm).toBeCloseTo(1, 12);
		expect(at.halfAngleRad * 1000).toBeCloseTo(0.67736, 4);
		expect(at.radiusMm).toBeCloseTo(Math.SQRT2, 12);
		// The real beam is M times its embedded Gaussian at every plane.
		expect(radiusAtQ(300, zr, 1064, 2) / radiusAtQ(300, zr, 1064, 1)).toBeCloseTo(Math.SQRT2, 12);
	});
	it('peak irradiance 2P/(πw0²): 1 W into a 10 µm radius waist is 6.37e5 W/cm² (worked by hand)', () => {
		expect(peakIrradianceWPerCm2(1, 0.01)).toBeCloseTo(2 / (Math.PI * 1e-6), 0);
		expect(peakIrradianceWPerCm2(1, 0.01)).toBeCloseTo(636_620, -1);
	});
});

describe('coupling of two Gaussian modes (W. B. Joyce and B. C. DeLoach, "Alignment of Gaussian beams", Applied Optics 23, 4187, 1984)', () => {
	it('η = 4/[(w1/w2 + w2/w1)² + (λΔz/(πw1w2))²]: waist ratio 2 gives 0.64; equal waists 2 z_R apart give 0.5', () => {
		expect(couplingEfficiency(0.1, 0.2, 0, 1064)).toBeCloseTo(0.64, 12);
		const zr = rayleighRangeMm(0.1, 1064);
		expect(couplingEfficiency(0.1, 0.1, 2 * zr, 1064)).toBeCloseTo(0.5, 12);
		expect(couplingEfficiency(0.1, 0.1, 0, 1064)).toBe(1);
	});
	it('the q form agrees with the waist form, and the overlap is the same after any lossless ABCD system', () => {
		const lambda = 1550,
			w1 = 0.0052,
			w2 = 0.0061,
			dz = 0.03;
		const z1 = rayleighRangeMm(w1, lambda),
			z2 = rayleighRangeMm(w2, lambda);
		const eta = couplingEfficiency(w1, w2, dz, lambda);
		expect(overlapFromQ(dz, z1, 0, z2)).toBeCloseTo(eta, 12);
		const m = multiply(create(), thin(8), translation(create(), 5));
		const a = propagateQ({ re: dz, im: z1 }, m)!,
			b = propagateQ({ re: 0, im: z2 }, m)!;
		expect(overlapFromQ(a.re, a.im, b.re, b.im)).toBeCloseTo(eta, 10);
	});
});

describe('mode field radius from V (D. Marcuse, Bell System Technical Journal 56, 703, 1977, eq. 10)', () => {
	it('w/a = 0.65 + 1.619 V^−3/2 + 2.879 V^−6: 1.2674 at V = 2.0, 1.0990 at V = 2.405 (worked by hand)', () => {
		expect(marcuseRadiusRatio(2)).toBeCloseTo(1.267387, 5);
		expect(marcuseRadiusRatio(2.405)).toBeCloseTo(1.09894, 4);
	});
	it('an invented fibre: core 4.4 µm, NA 0.10 at 633 nm has V = 2.184 and MFD 5.18 µm; at NA 0.12 it is multimode (no mode field)', () => {
		expect(normalisedFrequency(0.0044, 0.1, 633)).toBeCloseTo(2.1838, 3);
		expect(modeFieldDiameterMm({ coreDiameterMm: 0.0044, numericalAperture: 0.1 }, 633)! * 1000).toBeCloseTo(5.183, 2);
		expect(modeFieldDiameterMm({ coreDiameterMm: 0.0044, numericalAperture: 0.12 }, 633)).toBeNull();
		expect(modeFieldDiameterMm({ modeFieldDiameterMm: 0.0062 }, 1064)).toBe(0.0062);
	});
});

describe('afocal spacing', () => {
	it('two thin lenses are afocal at f1 + f2, with expansion −f2/f1 (common practice, no source)', () => {
		for (const [f1, f2] of [
			[50, 250],
			[-25, 125],
			[100, 20]
		]) {
			const m1 = thin(f1),
				m2 = thin(f2);
			const g = afocalGapMm(m1[0], m1[1], m1[2], m1[3], m2[0], m2[1], m2[2], m2[3])!;
			expect(g).toBeCloseTo(f1 + f2, 9);
			expect(pairA(m1[0], m1[1], m1[2], m1[3], m2[0], m2[1], g)).toBeCloseTo(-f2 / f1, 9);
		}
	});
	it('thick parts: the gap from the matrices makes C vanish exactly', () => {
		const a = element(singlet(25.8, null, 4, '517642'), 632.8),
			b = element(singlet(null, -129, 3, '517642'), 632.8);
		const g = afocalGapMm(a.matrix[0], a.matrix[1], a.matrix[2], a.matrix[3], b.matrix[0], b.matrix[1], b.matrix[2], b.matrix[3])!;
		const sys = multiply(create(), b.matrix, multiply(create(), translation(create(), g), a.matrix));
		expect(Math.abs(sys[2])).toBeLessThan(1e-15);
	});
});
