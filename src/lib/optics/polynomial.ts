/**
 * Real roots of a real polynomial inside an interval, for the beam solvers' closed forms
 * (a sextic for two-part mode matching, a degree-7 critical-point equation for one part).
 *
 * Method: the real roots of p in [lo, hi] are separated by the real roots of p′ (Rolle), so
 * they are found recursively down to a quadratic: between two consecutive critical points p
 * is monotonic and has a root exactly when it changes sign, which a safeguarded bisection
 * (Illinois regula falsi) pins to full precision. A critical point where |p| is at rounding
 * level is a double (touching) root and is reported once. Nothing is sampled, so no root is
 * missed between grid points. Coefficients are in ascending order: c[0] + c[1]·x + ….
 */

/** p(x) by Horner's rule. */
export function polyValue(c: ArrayLike<number>, x: number): number {
	let v = 0;
	for (let k = c.length - 1; k >= 0; k--) v = v * x + c[k];
	return v;
}

/** Σ|c_k|·|x|^k: the size of the terms of p(x), the scale of its rounding error. */
function polyScale(c: ArrayLike<number>, x: number): number {
	let v = 0;
	const ax = Math.abs(x);
	for (let k = c.length - 1; k >= 0; k--) v = v * ax + Math.abs(c[k]);
	return v;
}

/** p′ as coefficients. */
export function polyDerivative(c: ArrayLike<number>): number[] {
	const out: number[] = [];
	for (let k = 1; k < c.length; k++) out.push(k * c[k]);
	return out;
}

/** a·b as coefficients. */
export function polyMultiply(a: ArrayLike<number>, b: ArrayLike<number>): number[] {
	const out = new Array<number>(a.length + b.length - 1).fill(0);
	for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) out[i + j] += a[i] * b[j];
	return out;
}

/** a + s·b as coefficients. */
export function polyAdd(a: ArrayLike<number>, b: ArrayLike<number>, s = 1): number[] {
	const n = Math.max(a.length, b.length);
	const out = new Array<number>(n).fill(0);
	for (let k = 0; k < n; k++) out[k] = (k < a.length ? a[k] : 0) + s * (k < b.length ? b[k] : 0);
	return out;
}

/** Degree after dropping leading coefficients that are zero relative to the largest (1e-14). */
function effectiveDegree(c: ArrayLike<number>): number {
	let big = 0;
	for (let k = 0; k < c.length; k++) big = Math.max(big, Math.abs(c[k]));
	if (big === 0) return -1;
	let d = c.length - 1;
	while (d > 0 && Math.abs(c[d]) <= 1e-14 * big) d--;
	return d;
}

/** The root of p in [a, b], where p(a) and p(b) have opposite signs (Illinois regula falsi with bisection). */
function bracketRoot(c: ArrayLike<number>, a: number, b: number, fa: number, fb: number): number {
	for (let it = 0; it < 200; it++) {
		let x = (a * fb - b * fa) / (fb - fa);
		// Every fourth step (or when the secant leaves the bracket) a plain bisection keeps it shrinking.
		if (it % 4 === 3 || !(x > Math.min(a, b) && x < Math.max(a, b))) x = 0.5 * (a + b);
		const fx = polyValue(c, x);
		if (fx === 0) return x;
		if (fx * fb < 0) {
			a = b;
			fa = fb;
		} else fa /= 2; // Illinois: the end that stays is weighed down
		b = x;
		fb = fx;
		if (Math.abs(b - a) <= 4e-16 * Math.max(Math.abs(a), Math.abs(b)) + 1e-300) break;
	}
	return Math.abs(fa) < Math.abs(fb) ? a : b;
}

/** Relative size of |p(x)| against its terms below which a critical point counts as a (double) root. */
const TOUCH_TOL = 1e-11;

/**
 * Every real root of p in [lo, hi], ascending (a double root once). Empty for the zero
 * polynomial (every x is a root: the caller decides what that means).
 */
export function realRootsIn(c: ArrayLike<number>, lo: number, hi: number): number[] {
	if (!(lo <= hi)) return [];
	const deg = effectiveDegree(c);
	if (deg <= 0) return [];
	if (deg === 1) {
		const x = -c[0] / c[1];
		return x >= lo && x <= hi ? [x] : [];
	}
	const crit = realRootsIn(polyDerivative(Array.prototype.slice.call(c, 0, deg + 1) as number[]), lo, hi);
	const pts = [lo, ...crit, hi];
	const out: number[] = [];
	const push = (x: number) => {
		if (!out.length || Math.abs(x - out[out.length - 1]) > 1e-12 * Math.max(1, Math.abs(x))) out.push(x);
	};
	let fa = polyValue(c, pts[0]);
	if (fa === 0) push(pts[0]);
	for (let k = 1; k < pts.length; k++) {
		const a = pts[k - 1],
			b = pts[k];
		const fb = polyValue(c, b);
		if (fb === 0) push(b);
		else if (fa !== 0 && fa * fb < 0) {
			push(bracketRoot(c, a, b, fa, fb));
		} else if (k < pts.length - 1 && Math.abs(fb) <= TOUCH_TOL * polyScale(c, b)) {
			push(b); // touches zero at a critical point: a double root
		}
		fa = fb;
	}
	return out;
}
