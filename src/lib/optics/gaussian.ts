/**
 * Gaussian beams through the ray transfer matrices: the complex beam parameter q and the
 * ABCD law (H. Kogelnik and T. Li, "Laser beams and resonators", Applied Optics 5, 1550–1567,
 * 1966, sections II–III): q = z + i·z_R at a distance z past the waist, 1/q = 1/R − iλ/(πw²),
 * and q₂ = (A·q₁ + B)/(C·q₁ + D) through any paraxial system [[A, B], [C, D]].
 *
 * Reduced convention: our matrices act on (y, n·u) (see matrix.ts), so the law holds for the
 * reduced parameter q̂ = q/n: q̂₂ = (A·q̂₁ + B)/(C·q̂₁ + D), and q = n·q̂ on each side
 * (`propagateQ`). Every plane where the solver looks at a beam is in air (n = 1), where
 * q̂ = q; the vertex-to-vertex matrix of a thick part then carries q from its first vertex
 * plane to its last one exactly, whatever the glass in between.
 *
 * Real beams (M² ≥ 1) follow the embedded-Gaussian model (A. E. Siegman, Lasers, University
 * Science Books, 1986, section 17.1; also Siegman, "New developments in laser resonators",
 * Proc. SPIE 1224, 1990): a real beam of 1/e² radius W(z) is M times an ideal Gaussian of
 * radius w(z) = W(z)/M with the same waist position and Rayleigh range z_R = πW₀²/(M²λ), so
 * the ideal Gaussian's q propagates the real beam, and W₀·θ = M²λ/π.
 *
 * Units: mm for lengths, nm for wavelengths, rad for angles. A q value is a pair
 * { re: z (mm past the waist; negative before it), im: z_R (mm, > 0) }.
 */
import type { ReadonlyMat2 } from './matrix';

/** The complex beam parameter q = re + i·im (mm). */
export interface BeamQ {
	readonly re: number;
	readonly im: number;
}

/** Millimetres per nanometre. */
const MM_PER_NM = 1e-6;

/** Rayleigh range π·W₀²/(M²·λ), mm, of a beam of 1/e² waist radius W₀ (mm) at λ (nm). */
export function rayleighRangeMm(waistRadiusMm: number, wavelengthNm: number, mSquared = 1): number {
	return (Math.PI * waistRadiusMm * waistRadiusMm) / (mSquared * wavelengthNm * MM_PER_NM);
}

/** The 1/e² waist radius W₀ (mm) of a beam with Rayleigh range z_R (mm): √(z_R·M²·λ/π). */
export function waistRadiusMm(rayleighRangeMm: number, wavelengthNm: number, mSquared = 1): number {
	return Math.sqrt((rayleighRangeMm * mSquared * wavelengthNm * MM_PER_NM) / Math.PI);
}

/** q at `distanceMm` past a waist of radius W₀ (mm): distance + i·z_R. */
export function qAtDistance(waistRadiusMm: number, wavelengthNm: number, distanceMm: number, mSquared = 1): BeamQ {
	return { re: distanceMm, im: rayleighRangeMm(waistRadiusMm, wavelengthNm, mSquared) };
}

/** q after free space of length `distanceMm` in air: q + d (Kogelnik & Li 1966, eq. 13). */
export function translateQ(q: BeamQ, distanceMm: number): BeamQ {
	return { re: q.re + distanceMm, im: q.im };
}

/**
 * The ABCD law with the reduced convention: q in a medium of index `indexBefore` through the
 * reduced matrix `m` into a medium of index `indexAfter`. Returns null when the result is not
 * a beam (Im q ≤ 0 cannot happen for a lossless system, so it signals a bad matrix).
 */
export function propagateQ(q: BeamQ, m: ReadonlyMat2, indexBefore = 1, indexAfter = 1): BeamQ | null {
	const qr = q.re / indexBefore,
		qi = q.im / indexBefore;
	// (A q + B) / (C q + D), complex.
	const nr = m[0] * qr + m[1],
		ni = m[0] * qi;
	const dr = m[2] * qr + m[3],
		di = m[2] * qi;
	const den = dr * dr + di * di;
	if (!(den > 0)) return null;
	const re = (nr * dr + ni * di) / den,
		im = (ni * dr - nr * di) / den;
	if (!(im > 0)) return null;
	return { re: re * indexAfter, im: im * indexAfter };
}

/**
 * Hot-path form of the ABCD law in air: writes (Re, Im) of (A·q + B)/(C·q + D) into out[0..1].
 * Allocates nothing.
 */
export function abcdQ(out: Float64Array, qr: number, qi: number, a: number, b: number, c: number, d: number): void {
	const nr = a * qr + b,
		ni = a * qi;
	const dr = c * qr + d,
		di = c * qi;
	const den = dr * dr + di * di;
	out[0] = (nr * dr + ni * di) / den;
	out[1] = (ni * dr - nr * di) / den;
}

/** What a beam looks like at the plane where its parameter is q. */
export interface BeamAtPlane {
	/** 1/e² radius of the real beam, mm. */
	radiusMm: number;
	/** Wavefront radius of curvature, mm (Infinity at the waist; + diverging, light towards +z). */
	wavefrontRadiusMm: number;
	/** Distance from this plane to the waist, mm (+: the waist lies further along +z). */
	waistAheadMm: number;
	/** Waist 1/e² radius of the real beam, mm. */
	waistRadiusMm: number;
	/** Rayleigh range, mm. */
	rayleighRangeMm: number;
	/** Far-field half-angle divergence M²λ/(πW₀), rad. */
	halfAngleRad: number;
}

/** The beam at the plane of q (see BeamAtPlane); Kogelnik & Li 1966, eqs. 16–19, with Siegman's M². */
export function beamAt(q: BeamQ, wavelengthNm: number, mSquared = 1): BeamAtPlane {
	const z = q.re,
		zr = q.im;
	const w0 = waistRadiusMm(zr, wavelengthNm, mSquared);
	return {
		radiusMm: w0 * Math.sqrt(1 + (z / zr) * (z / zr)),
		wavefrontRadiusMm: z === 0 ? Infinity : z + (zr * zr) / z,
		waistAheadMm: -z,
		waistRadiusMm: w0,
		rayleighRangeMm: zr,
		halfAngleRad: (mSquared * wavelengthNm * MM_PER_NM) / (Math.PI * w0)
	};
}

/** 1/e² radius (mm) of the real beam where its parameter is (qr, qi): W₀·√(1 + (z/z_R)²). */
export function radiusAtQ(qr: number, qi: number, wavelengthNm: number, mSquared = 1): number {
	return Math.sqrt(((qi * mSquared * wavelengthNm * MM_PER_NM) / Math.PI) * (1 + (qr / qi) * (qr / qi)));
}

/** Embedded Gaussian of a real beam: its 1/e² radius is the real one over M (Siegman 1986, 17.1). */
export function embeddedRadiusMm(realRadiusMm: number, mSquared: number): number {
	return realRadiusMm / Math.sqrt(mSquared);
}

/** Peak irradiance 2P/(πW₀²) at a waist of 1/e² radius W₀ (mm), in W/cm² (P in W). */
export function peakIrradianceWPerCm2(powerW: number, waistRadiusMm: number): number {
	const wCm = waistRadiusMm / 10;
	return (2 * powerW) / (Math.PI * wCm * wCm);
}
