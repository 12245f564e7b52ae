/**
 * Shared test helpers for the optics core: a seeded random generator, invented demo
 * lenses (no catalogue data), and an independent brute-force pair search.
 */
import { buildElement, type SurfaceSpec, type ThickElement } from '../../../src/lib/optics';
import { mulberry32 } from '../../../src/lib/prng';

/** Deterministic pseudo-random numbers (mulberry32), the same on every machine. */
export const rng = mulberry32;

/** Uniform number in [lo, hi). */
export function uniform(r: () => number, lo: number, hi: number): number {
	return lo + (hi - lo) * r();
}

/** Builds an element or fails the test with the error message. */
export function element(surfaces: SurfaceSpec[], wavelengthNm = 587.5618, clearApertureMm: number | null = null, reversed = false): ThickElement {
	const r = buildElement(surfaces, wavelengthNm, { clearApertureMm, reversed });
	if (!r.ok) throw r.error;
	return r.value;
}

/** A singlet: R1, R2 (null = flat), centre thickness, material. */
export function singlet(r1: number | null, r2: number | null, t: number, material = '517642'): SurfaceSpec[] {
	return [{ radiusMm: r1, thicknessMm: t, material }, { radiusMm: r2 }];
}

const MATERIALS = ['fused-silica', 'caf2', 'sapphire-o', '517642', '620364', '785257', '589613'];

/**
 * A random invented singlet with |EFL| roughly 15–600 mm, a realistic thickness and a
 * clear aperture that fits on both spheres, with its edge thickness positive.
 */
export function randomSinglet(r: () => number): { surfaces: SurfaceSpec[]; clearApertureMm: number } {
	for (;;) {
		const material = MATERIALS[Math.floor(r() * MATERIALS.length)];
		const pick = () => {
			const u = r();
			if (u < 0.15) return null;
			const mag = uniform(r, 12, 400);
			return u < 0.6 ? mag : -mag;
		};
		const r1 = pick(),
			r2 = pick();
		if (r1 === null && r2 === null) continue;
		const t = uniform(r, 1.5, 8);
		const minR = Math.min(r1 === null ? Infinity : Math.abs(r1), r2 === null ? Infinity : Math.abs(r2));
		const ca = Math.min(uniform(r, 5, 40), 0.8 * minR);
		const surfaces = singlet(r1, r2, t, material);
		const e = buildElement(surfaces, 587.5618, { clearApertureMm: ca });
		if (!e.ok) continue;
		const f = -1 / e.value.matrix[2];
		if (!(Math.abs(f) > 15 && Math.abs(f) < 600)) continue;
		// Edge thickness must stay positive.
		const h = ca / 2;
		const sag = (R: number | null) => (R === null ? 0 : R - Math.sign(R) * Math.sqrt(R * R - h * h));
		if (t + sag(r2) - sag(r1) < 0.5) continue;
		return { surfaces, clearApertureMm: ca };
	}
}

/** 2x2 product a·b on plain arrays, written out independently of the library. */
export function mul(a: number[], b: number[]): number[] {
	return [a[0] * b[0] + a[1] * b[2], a[0] * b[1] + a[1] * b[3], a[2] * b[0] + a[3] * b[2], a[2] * b[1] + a[3] * b[3]];
}

/** Translation in air. */
export function T(d: number): number[] {
	return [1, d, 0, 1];
}

/**
 * Brute-force pair search, independent of the closed form: for each gap g on a grid the
 * two conjugates of the combined matrix K(g) over the remaining track are found from
 * B(s) = 0 (a quadratic in s solved by the textbook formula), and every sign change of
 * (achieved m − target m) along g is refined by bisection. Finds transversal roots
 * only: it cannot see roots where m touches the target without crossing.
 */
export function bruteForceGaps(e1: ThickElement, e2: ThickElement, L: number, m: number, gMin: number, gMax: number, steps = 20000): number[] {
	const E1 = Array.from(e1.matrix),
		E2 = Array.from(e2.matrix);
	const branches = (g: number): [number, number] | null => {
		const K = mul(E2, mul(T(g), E1));
		const [a, b, c, d] = K;
		const lam = L - e1.thicknessMm - e2.thicknessMm - g;
		// B(s) = a s + b + (lam − s)(c s + d) = −c s² + (a + c lam − d) s + (b + d lam)
		const qa = -c,
			qb = a + c * lam - d,
			qc = b + d * lam;
		const disc = qb * qb - 4 * qa * qc;
		if (disc < 0) return null;
		const s1 = (-qb + Math.sqrt(disc)) / (2 * qa),
			s2 = (-qb - Math.sqrt(disc)) / (2 * qa);
		const mag = (s: number) => 1 / (c * s + d);
		const m1 = mag(s1),
			m2 = mag(s2);
		return m1 <= m2 ? [m1, m2] : [m2, m1];
	};
	const roots: number[] = [];
	for (const which of [0, 1] as const) {
		const h = (g: number) => {
			const br = branches(g);
			return br === null ? null : br[which] - m;
		};
		let gPrev = gMin,
			hPrev = h(gMin);
		for (let k = 1; k <= steps; k++) {
			const g = gMin + ((gMax - gMin) * k) / steps;
			const hv = h(g);
			if (hPrev !== null && hv !== null && Math.sign(hPrev) !== Math.sign(hv) && Math.abs(hPrev - hv) < 1) {
				let lo = gPrev,
					hi = g,
					hl = hPrev;
				for (let it = 0; it < 200; it++) {
					const mid = (lo + hi) / 2;
					const hm = h(mid);
					if (hm === null) break;
					if (Math.sign(hm) === Math.sign(hl)) {
						lo = mid;
						hl = hm;
					} else hi = mid;
				}
				roots.push((lo + hi) / 2);
			}
			gPrev = g;
			hPrev = hv;
		}
	}
	return roots.sort((x, y) => x - y);
}
