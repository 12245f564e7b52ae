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
import { realRootsIn, polyMultiply, polyAdd, polyDerivative } from './polynomial';
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
	// p(Z) = Z·α²(1 + Z/z₀)², q(Z) = Z·β²(1 + Z/z_t)²: cubics.
	const p = [k1, (2 * k1) / z0 - z0 * z0, k1 / (z0 * z0) - 2 * z0, -1];
	const q = [k2, (2 * k2) / zt - zt * zt, k2 / (zt * zt) - 2 * zt, -1];
	const r = polyAdd(polyAdd(p, q, -1), [0, kk * kk], -1);
	const poly = polyAdd(polyMultiply(r, r), polyMultiply([0, 4 * kk * kk], q), -1);
	// Scale Z to [0, 1] over the interval for a better conditioned search.
	const roots = realRootsIn(scaleArgument(poly, zMax), zMin / zMax, 1).map((u) => u * zMax);
	const out: PairRoot[] = [];
	const branch = (z: number, s1: number, s2: number) => {
		const al = Math.sqrt(Math.max(0, k1 / z - z0 * z0)),
			be = Math.sqrt(Math.max(0, k2 / z - zt * zt));
		return { al, be, F: s1 * al * (1 + z / z0) + s2 * be * (1 + z / zt) - kk, size: al * (1 + z / z0) + be * (1 + z / zt) + Math.abs(kk) };
	};
	for (const z0root of roots) {
		if (!(z0root > 0)) continue;
		for (const s1 of [1, -1]) {
			for (const s2 of [1, -1]) {
				let z = z0root;
				let br = branch(z, s1, s2);
				if (!(Math.abs(br.F) <= 1e-6 * br.size)) continue;
				if (br.al === 0 && s1 < 0) continue;
				if (br.be === 0 && s2 < 0) continue;
				// Newton on the unsquared F (numeric slope), kept only while it improves.
				for (let it = 0; it < 4 && br.F !== 0; it++) {
					const h = 1e-7 * z;
					const slope = (branch(z + h, s1, s2).F - branch(z - h, s1, s2).F) / (2 * h);
					if (!(Math.abs(slope) > 0)) break;
					const zn = z - br.F / slope;
					if (!(zn > 0 && zn <= zMax * (1 + 1e-12))) break;
					const bn = branch(zn, s1, s2);
					if (!(Math.abs(bn.F) < Math.abs(br.F))) break;
					z = zn;
					br = bn;
				}
				const aDist = f1 + s1 * br.al,
					bDist = f2 + s2 * br.be;
				const eDist = sAll - aDist - bDist;
				const p1 = beams.inWaistZMm + aDist - t1.h1Mm;
				const gap = eDist - t2.h1Mm + t1.h2Mm;
				const eff = pairEfficiency(beams, e1, e2, p1, gap);
				if (!(eff >= 1 - 1e-9)) continue;
				if (out.some((o) => Math.abs(o.p1Mm - p1) <= 1e-7 * Math.max(1, Math.abs(p1)) && Math.abs(o.gapMm - gap) <= 1e-7 * Math.max(1, Math.abs(gap)))) continue;
				out.push({ p1Mm: p1, gapMm: gap, middleRayleighMm: z });
			}
		}
	}
	return out;
}

/** Coefficients of p(s·u) as a polynomial in u. */
function scaleArgument(c: number[], s: number): number[] {
	let k = 1;
	return c.map((v) => {
		const out = v * k;
		k *= s;
		return out;
	});
}


