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
import { TOUCH_TOL } from './tolerances';

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

/** Degree after dropping leading coefficients that are zero relative to the largest (1e-14); c[0..n-1] are read. */
function effectiveDegree(c: ArrayLike<number>, n = c.length): number {
	let big = 0;
	for (let k = 0; k < n; k++) big = Math.max(big, Math.abs(c[k]));
	if (big === 0) return -1;
	let d = n - 1;
	while (d > 0 && Math.abs(c[d]) <= 1e-14 * big) d--;
	return d;
}

/** p(x) by Horner's rule over c[0..deg]. */
function valueTo(c: Float64Array, deg: number, x: number): number {
	let v = 0;
	for (let k = deg; k >= 0; k--) v = v * x + c[k];
	return v;
}

/** Σ|c_k|·|x|^k over c[0..deg]. */
function scaleTo(c: Float64Array, deg: number, x: number): number {
	let v = 0;
	const ax = Math.abs(x);
	for (let k = deg; k >= 0; k--) v = v * ax + Math.abs(c[k]);
	return v;
}

/** The root of p in [a, b], where p(a) and p(b) have opposite signs (Illinois regula falsi with bisection). */
function bracketRoot(c: Float64Array, deg: number, a: number, b: number, fa: number, fb: number): number {
	for (let it = 0; it < 200; it++) {
		let x = (a * fb - b * fa) / (fb - fa);
		// Every fourth step (or when the secant leaves the bracket) a plain bisection keeps it shrinking.
		if (it % 4 === 3 || !(x > Math.min(a, b) && x < Math.max(a, b))) x = 0.5 * (a + b);
		const fx = valueTo(c, deg, x);
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


/** Highest degree the allocation-free search takes. */
export const MAX_ROOT_DEGREE = 12;
// Workspace per recursion level (the derivative of level k is level k + 1): coefficients and roots.
const levelCoef = Array.from({ length: MAX_ROOT_DEGREE + 2 }, () => new Float64Array(MAX_ROOT_DEGREE + 1));
const levelRoots = Array.from({ length: MAX_ROOT_DEGREE + 2 }, () => new Float64Array(MAX_ROOT_DEGREE + 2));

/**
 * Roots of the polynomial levelCoef[level][0..len−1] in [lo, hi] into `out` (ascending); returns how many. Values
 * are taken over all `len` coefficients; negligible leading ones only lower the degree of the derivative taken.
 */
function rootsAtLevel(level: number, len: number, lo: number, hi: number, out: Float64Array): number {
	const c = levelCoef[level];
	const deg = effectiveDegree(c, len);
	const top = len - 1;
	if (deg <= 0) return 0;
	if (deg === 1) {
		const x = -c[0] / c[1];
		if (x >= lo && x <= hi) {
			out[0] = x;
			return 1;
		}
		return 0;
	}
	const d = levelCoef[level + 1];
	for (let k = 1; k <= deg; k++) d[k - 1] = k * c[k];
	const crit = levelRoots[level + 1];
	const nc = rootsAtLevel(level + 1, deg, lo, hi, crit);
	let n = 0;
	const push = (x: number) => {
		if (n === 0 || Math.abs(x - out[n - 1]) > 1e-12 * Math.max(1, Math.abs(x))) out[n++] = x;
	};
	let a = lo;
	let fa = valueTo(c, top, lo);
	if (fa === 0) push(lo);
	for (let k = 0; k <= nc; k++) {
		const b = k < nc ? crit[k] : hi;
		const fb = valueTo(c, top, b);
		if (fb === 0) push(b);
		else if (fa !== 0 && fa * fb < 0) push(bracketRoot(c, top, a, b, fa, fb));
		else if (k < nc && Math.abs(fb) <= TOUCH_TOL * scaleTo(c, top, b)) push(b); // touches zero at a critical point: a double root
		a = b;
		fa = fb;
	}
	return n;
}

/**
 * Every real root of p (c[0..n−1], n ≤ MAX_ROOT_DEGREE + 1) in [lo, hi], ascending (a double root once), written
 * into `out` (room for n + 1); returns how many. Allocates nothing: for the beam search's hot path.
 */
export function realRootsInto(c: ArrayLike<number>, n: number, lo: number, hi: number, out: Float64Array): number {
	if (!(lo <= hi)) return 0;
	if (n > MAX_ROOT_DEGREE + 1) throw new Error(`degree ${n - 1} is above ${MAX_ROOT_DEGREE}`);
	const top = levelCoef[0];
	for (let k = 0; k < n; k++) top[k] = c[k];
	return rootsAtLevel(0, n, lo, hi, out);
}

/**
 * Every real root of p in [lo, hi], ascending (a double root once). Empty for the zero
 * polynomial (every x is a root: the caller decides what that means).
 */
export function realRootsIn(c: ArrayLike<number>, lo: number, hi: number): number[] {
	const out = new Float64Array(c.length + 1);
	return Array.from(out.subarray(0, realRootsInto(c, c.length, lo, hi, out)));
}
