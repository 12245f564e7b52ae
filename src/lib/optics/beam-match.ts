/**
 * Closed forms of the beam solver: where to put one or two parts so that an input Gaussian beam
 * becomes a target beam. Pure numbers, no allocation beyond small coefficient arrays.
 *
 * Any part in air is, for the ABCD law, a thin lens of focal length f between its principal
 * planes H (at h₁ from its first vertex) and H′ (at h₂ from its last vertex): the vertex-to-vertex
 * matrix [[A, B], [C, D]] has f = −1/C, h₁ = (D − 1)/C, h₂ = (1 − A)/C (the inverse of
 * `fromPrincipalPlanes`), so nothing is approximated by working with f, h₁, h₂.
 *
 * Through a thin lens a waist of Rayleigh range z_R at distance s before the lens gives a waist
 * at s′ = f + f²(s − f)/((s − f)² + z_R²) behind it with Rayleigh range z_R′ = f²z_R/((s − f)² + z_R²)
 * (S. A. Self, "Focusing of spherical Gaussian beams", Applied Optics 22, 658–661, 1983, eqs. 9a, 10,
 * written in z_R; from the ABCD law). With Z = z_R′ the intermediate Rayleigh range, s′ = f + (s − f)·Z/z_R.
 *
 * Two parts (input waist → H₁, a; H₁′ → H₂, e; H₂′ → target waist, b; a + e + b = S fixed by the
 * bench): the beam between the parts must be the same seen from both ends, so with
 * α = a − f₁ = ±√(f₁²z₀/Z − z₀²) and β = b − f₂ = ±√(f₂²z_t/Z − z_t²):
 *   F(Z) = α(1 + Z/z₀) + β(1 + Z/z_t) − (S − 2f₁ − 2f₂) = 0.
 * Squared twice and multiplied by Z², it is a polynomial of degree 6 in Z, whose real roots in
 * (0, min(f₁²/z₀, f₂²/z_t)] are all the answers; each is checked against the unsquared F on each of
 * the four sign branches, polished by Newton's method on F, and then re-verified by the matrices.
 */
import { realRootsIn, realRootsInto, polyMultiply, polyAdd, polyDerivative } from './polynomial';
import { overlapFromQ } from './coupling';

/** A part seen by the ABCD law: focal length and principal planes (null for an afocal part). */
export interface ThinEquivalent {
	fMm: number;
	/** H from the first vertex, mm (+ towards +z). */
	h1Mm: number;
	/** H′ from the last vertex, mm. */
	h2Mm: number;
}

/** f, h₁, h₂ of the vertex-to-vertex matrix (A, B, C, D); null when C = 0 (no power). */
export function thinEquivalent(a: number, _b: number, c: number, d: number): ThinEquivalent | null {
	if (!(Math.abs(c) > 1e-15)) return null;
	return { fMm: -1 / c, h1Mm: (d - 1) / c, h2Mm: (1 - a) / c };
}

/** The beams of a question: input waist position and Rayleigh range, target waist position and Rayleigh range (mm). */
export interface MatchBeams {
	inWaistZMm: number;
	inRayleighMm: number;
	targetZMm: number;
	targetRayleighMm: number;
}

/** A part for the closed forms: its matrix at the wavelength and its thickness. */
export interface MatchPart {
	a: number;
	b: number;
	c: number;
	d: number;
	thicknessMm: number;
}

const qOut = new Float64Array(2);

/** q after a part at first vertex `p1` (from z = 0), written into qOut at the target plane; returns the overlap with the target. */
export function singleEfficiency(beams: MatchBeams, e: MatchPart, p1: number): number {
	const qr = p1 - beams.inWaistZMm,
		qi = beams.inRayleighMm;
	propagate(qr, qi, e);
	return overlapFromQ(qOut[0] + (beams.targetZMm - p1 - e.thicknessMm), qOut[1], 0, beams.targetRayleighMm);
}

/** The overlap with the target of the pair at first vertex `p1` and vertex gap `gap`. */
export function pairEfficiency(beams: MatchBeams, e1: MatchPart, e2: MatchPart, p1: number, gap: number): number {
	propagate(p1 - beams.inWaistZMm, beams.inRayleighMm, e1);
	propagate(qOut[0] + gap, qOut[1], e2);
	const last = p1 + e1.thicknessMm + gap + e2.thicknessMm;
	return overlapFromQ(qOut[0] + (beams.targetZMm - last), qOut[1], 0, beams.targetRayleighMm);
}

function propagate(qr: number, qi: number, e: MatchPart): void {
	const nr = e.a * qr + e.b,
		ni = e.a * qi;
	const dr = e.c * qr + e.d,
		di = e.c * qi;
	const den = dr * dr + di * di;
	qOut[0] = (nr * dr + ni * di) / den;
	qOut[1] = (ni * dr - nr * di) / den;
}

/**
 * The best place for one part: the first-vertex position p in [pLo, pHi] that maximises the
 * overlap with the target. The overlap is a rational function of x = a − f (see the module
 * comment); its critical points are the real roots of a degree-7 polynomial, so the maximum is
 * one of them or an end of the interval. Returns { p, efficiency } (efficiency by the matrices),
 * or null for a part without power.
 */
export function bestSinglePlacement(beams: MatchBeams, e: MatchPart, pLo: number, pHi: number): { p: number; efficiency: number } | null {
	const th = thinEquivalent(e.a, e.b, e.c, e.d);
	if (!th || !(pLo <= pHi)) return null;
	const { fMm: f, h1Mm: h1, h2Mm: h2 } = th;
	const z0 = beams.inRayleighMm,
		zt = beams.targetRayleighMm;
	const s1 = h1 - beams.inWaistZMm + beams.targetZMm - e.thicknessMm - h2;
	const c0 = 2 * f - s1;
	const f2 = f * f;
	const dPoly = [z0 * z0, 0, 1];
	const num = dPoly.map((k) => 4 * f2 * z0 * zt * k);
	const zr = [f2 * z0 + zt * z0 * z0, 0, zt];
	const off = [c0 * z0 * z0, z0 * z0 + f2, c0, 1];
	const den = polyAdd(polyMultiply(zr, zr), polyMultiply(off, off));
	const crit = polyAdd(polyMultiply(polyDerivative(num), den), polyMultiply(num, polyDerivative(den)), -1);
	const xOf = (p: number) => p + h1 - beams.inWaistZMm - f;
	const candidates = [pLo, pHi];
	for (const x of realRootsIn(crit, xOf(pLo), xOf(pHi))) candidates.push(x - h1 + beams.inWaistZMm + f);
	let best: { p: number; efficiency: number } | null = null;
	for (const p of candidates) {
		const eff = singleEfficiency(beams, e, p);
		if (Number.isFinite(eff) && (!best || eff > best.efficiency)) best = { p, efficiency: eff };
	}
	return best;
}

/** One exact two-part answer before the physical filter: first vertex of part 1 (from z = 0) and the vertex gap, mm. */
export interface PairRoot {
	p1Mm: number;
	gapMm: number;
	/** Rayleigh range of the beam between the parts, mm. */
	middleRayleighMm: number;
}

/** The interval of intermediate Rayleigh ranges Z a part allows when its a (or b) lies in [lo, hi] (mm), for z_R = zr. */
export function middleRayleighRange(fMm: number, zr: number, lo: number, hi: number): [number, number] | null {
	if (!(lo <= hi)) return null;
	const x1 = lo - fMm,
		x2 = hi - fMm;
	const maxSq = Math.max(x1 * x1, x2 * x2);
	const minSq = x1 <= 0 && x2 >= 0 ? 0 : Math.min(x1 * x1, x2 * x2);
	const k = fMm * fMm * zr;
	return [k / (maxSq + zr * zr), k / (minSq + zr * zr)];
}

/**
 * Every placement (p₁, gap) of part 1 then part 2 that turns the input beam exactly into the
 * target beam, with the intermediate Rayleigh range in [zLo, zHi] (the caller's bounds from the
 * bench). Roots failing the matrix re-verification (overlap < 1 − 1e-9) are dropped.
 */
export function pairMatchRoots(beams: MatchBeams, e1: MatchPart, e2: MatchPart, zLo: number, zHi: number): PairRoot[] {
	const t1 = thinEquivalent(e1.a, e1.b, e1.c, e1.d),
		t2 = thinEquivalent(e2.a, e2.b, e2.c, e2.d);
	if (!t1 || !t2) return [];
	const z0 = beams.inRayleighMm,
		zt = beams.targetRayleighMm;
	const f1 = t1.fMm,
		f2 = t2.fMm;
	const k1 = f1 * f1 * z0,
		k2 = f2 * f2 * zt;
	const zMax = Math.min(zHi, k1 / (z0 * z0), k2 / (zt * zt));
	const zMin = Math.max(zLo, 0);
	if (!(zMin <= zMax) || !(zMax > 0)) return [];
	const sAll = beams.targetZMm - beams.inWaistZMm - e1.thicknessMm - e2.thicknessMm + t1.h1Mm - t1.h2Mm + t2.h1Mm - t2.h2Mm;
	const kk = sAll - 2 * f1 - 2 * f2;
	// p(Z) = Z·α²(1 + Z/z₀)², q(Z) = Z·β²(1 + Z/z_t)²: cubics; r = p − q − kk²·Z; the sextic r² − 4kk²·Z·q.
	// Built in place (the search solves it for every pair it keeps): the same sums, in the same order, as
	// polyAdd/polyMultiply would make.
	const p0 = k1,
		p1 = (2 * k1) / z0 - z0 * z0,
		p2 = k1 / (z0 * z0) - 2 * z0;
	const q0 = k2,
		q1 = (2 * k2) / zt - zt * zt,
		q2 = k2 / (zt * zt) - 2 * zt,
		q3 = -1;
	const r0 = p0 - q0,
		r1 = p1 - q1 - kk * kk,
		r2 = p2 - q2,
		r3 = -1 - q3;
	const m = 4 * kk * kk;
	const c = sextic;
	c[0] = r0 * r0;
	c[1] = r0 * r1 + r1 * r0 - m * q0;
	c[2] = r0 * r2 + r1 * r1 + r2 * r0 - m * q1;
	c[3] = r0 * r3 + r1 * r2 + r2 * r1 + r3 * r0 - m * q2;
	c[4] = r1 * r3 + r2 * r2 + r3 * r1 - m * q3;
	c[5] = r2 * r3 + r3 * r2;
	c[6] = r3 * r3;
	// Scale Z to [0, 1] over the interval for a better conditioned search.
	let scale = 1;
	for (let k = 0; k < 7; k++) {
		c[k] *= scale;
		scale *= zMax;
	}
	const nRoots = realRootsInto(c, 7, zMin / zMax, 1, sexticRoots);
	const out: PairRoot[] = [];
	for (let n = 0; n < nRoots; n++) {
		const z0root = sexticRoots[n] * zMax;
		if (!(z0root > 0)) continue;
		for (let s1 = 1; s1 >= -1; s1 -= 2) {
			for (let s2 = 1; s2 >= -1; s2 -= 2) {
				let z = z0root;
				let F = branchF(z, s1, s2, k1, k2, z0, zt, kk);
				const al = brAl,
					be = brBe;
				if (!(Math.abs(F) <= 1e-6 * brSize)) continue;
				if (al === 0 && s1 < 0) continue;
				if (be === 0 && s2 < 0) continue;
				let alz = al,
					bez = be;
				// Newton on the unsquared F (numeric slope), kept only while it improves.
				for (let it = 0; it < 4 && F !== 0; it++) {
					const h = 1e-7 * z;
					const slope = (branchF(z + h, s1, s2, k1, k2, z0, zt, kk) - branchF(z - h, s1, s2, k1, k2, z0, zt, kk)) / (2 * h);
					if (!(Math.abs(slope) > 0)) break;
					const zn = z - F / slope;
					if (!(zn > 0 && zn <= zMax * (1 + 1e-12))) break;
					const Fn = branchF(zn, s1, s2, k1, k2, z0, zt, kk);
					if (!(Math.abs(Fn) < Math.abs(F))) break;
					z = zn;
					F = Fn;
					alz = brAl;
					bez = brBe;
				}
				const aDist = f1 + s1 * alz,
					bDist = f2 + s2 * bez;
				const eDist = sAll - aDist - bDist;
				const pos = beams.inWaistZMm + aDist - t1.h1Mm;
				const gap = eDist - t2.h1Mm + t1.h2Mm;
				const eff = pairEfficiency(beams, e1, e2, pos, gap);
				if (!(eff >= 1 - 1e-9)) continue;
				if (out.some((o) => Math.abs(o.p1Mm - pos) <= 1e-7 * Math.max(1, Math.abs(pos)) && Math.abs(o.gapMm - gap) <= 1e-7 * Math.max(1, Math.abs(gap)))) continue;
				out.push({ p1Mm: pos, gapMm: gap, middleRayleighMm: z });
			}
		}
	}
	return out;
}

const sextic = new Float64Array(7);
const sexticRoots = new Float64Array(8);
/** α, β and the size of the terms of the last branchF call. */
let brAl = 0,
	brBe = 0,
	brSize = 0;
/** The unsquared match condition F(Z) = s₁α(1 + Z/z₀) + s₂β(1 + Z/z_t) − kk of one sign branch (α, β in brAl, brBe). */
function branchF(z: number, s1: number, s2: number, k1: number, k2: number, z0: number, zt: number, kk: number): number {
	const al = Math.sqrt(Math.max(0, k1 / z - z0 * z0)),
		be = Math.sqrt(Math.max(0, k2 / z - zt * zt));
	brAl = al;
	brBe = be;
	brSize = al * (1 + z / z0) + be * (1 + z / zt) + Math.abs(kk);
	return s1 * al * (1 + z / z0) + s2 * be * (1 + z / zt) - kk;
}


