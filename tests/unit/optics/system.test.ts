import { describe, expect, it } from 'vitest';
import { create as createMath, all, type Fraction, type BigNumber, type Matrix } from 'mathjs';
import {
	create,
	multiply,
	translation,
	refraction,
	thinLens,
	blackBoxElement,
	type ThickElement,
	determinant,
	approxEqual,
	matApproxEqual,
	composeSystem,
	layoutMatrix,
	firstVertexPositionsMm,
	trackLengthMm,
	imageAfter,
	isImaging,
	systemCardinalPoints,
	refractiveIndex,
	fromPrincipalPlanes,
	cardinalPoints,
	type Layout
} from '../../../src/lib/optics';
import { element, singlet } from './helpers';

/** A thin lens as a black box of zero thickness (BFL = EFL). */
function thin(f: number): ThickElement {
	const r = blackBoxElement({ eflMm: f, bflMm: f, centerThicknessMm: 0 }, 550);
	if (!r.ok) throw r.error;
	expect(matApproxEqual(r.value.matrix, thinLens(create(), 1 / f), 1e-15)).toBe(true);
	return r.value;
}

const math = createMath(all, { number: 'number', precision: 64 });

describe('matrix primitives', () => {
	it('multiply writes into out, may alias an input, and is the product right-to-left', () => {
		const a = create(1, 2, 3, 4),
			b = create(5, 6, 7, 8);
		const out = create();
		expect(Array.from(multiply(out, a, b))).toEqual([19, 22, 43, 50]);
		multiply(a, a, b);
		expect(Array.from(a)).toEqual([19, 22, 43, 50]);
	});

	it('translation and refraction are reduced: determinant 1 whatever the indices', () => {
		expect(determinant(translation(create(), 12.5, 1.7))).toBe(1);
		expect(determinant(refraction(create(), 1, 1.62, 33))).toBe(1);
	});

	it('approxEqual is absolute near zero and relative above', () => {
		expect(approxEqual(1e-14, 0, 1e-12)).toBe(true);
		expect(approxEqual(1e6, 1e6 + 1e-7, 1e-12)).toBe(true);
		expect(approxEqual(1e6, 1e6 + 1e-3, 1e-12)).toBe(false);
	});

	it('fromPrincipalPlanes gives back its power and principal planes', () => {
		const m = fromPrincipalPlanes(create(), 1 / 80, 3.2, -5.1);
		const c = cardinalPoints(m)!;
		expect(c.eflMm).toBeCloseTo(80, 12);
		expect(c.frontPrincipalMm).toBeCloseTo(3.2, 12);
		expect(c.backPrincipalMm).toBeCloseTo(-5.1, 12);
	});
});

describe('mathjs (general-purpose reference library) recomputes system matrices', () => {
	// Exact rational arithmetic: with rational radii, thicknesses and indices the system
	// matrix is a matrix of fractions, computed by mathjs independently of our code.
	const frac = (x: number | string) => math.fraction(x) as Fraction;
	const fdiv = (a: Fraction, b: Fraction) => math.divide(a, b) as Fraction;
	const fsub = (a: Fraction, b: Fraction) => math.subtract(a, b) as Fraction;
	const fneg = (a: Fraction) => math.unaryMinus(a) as Fraction;
	const fmat = (rows: Fraction[][]) => math.matrix(rows) as Matrix;
	const Tq = (t: string, n: string) => fmat([[frac(1), fdiv(frac(t), frac(n))], [frac(0), frac(1)]]);
	const Rq = (n1: string, n2: string, r: string) =>
		fmat([[frac(1), frac(0)], [fneg(fdiv(fsub(frac(n2), frac(n1)), frac(r))), frac(1)]]);

	it('a cemented doublet plus spacing, exactly in fractions', () => {
		// invented: R 61.2 / −44 / −128, glass n 3/2 then 8/5, t 6 and 5/2, 30 mm before, 45 after
		const steps = [
			Tq('30', '1'),
			Rq('1', '3/2', '61.2'),
			Tq('6', '3/2'),
			Rq('3/2', '8/5', '-44'),
			Tq('5/2', '8/5'),
			Rq('8/5', '1', '-128'),
			Tq('45', '1')
		];
		let exact = fmat([[frac(1), frac(0)], [frac(0), frac(1)]]);
		for (const s of steps) exact = math.multiply(s, exact) as Matrix;
		const entries = (exact.toArray() as Fraction[][]).flat();
		expect(entries.every((x) => math.typeOf(x) === 'Fraction')).toBe(true); // really exact
		expect(math.equal(math.det(exact) as unknown as Fraction, frac(1))).toBe(true); // reduced matrices: det exactly 1

		const ours = create();
		const t = create();
		const push = (m: Float64Array) => multiply(ours, m, ours);
		push(translation(t, 30));
		push(refraction(t, 1, 1.5, 61.2));
		push(translation(t, 6, 1.5));
		push(refraction(t, 1.5, 1.6, -44));
		push(translation(t, 2.5, 1.6));
		push(refraction(t, 1.6, 1, -128));
		push(translation(t, 45));
		const ref = entries.map((x) => Number(x.valueOf()));
		expect(matApproxEqual(ours, ref, 1e-13)).toBe(true);
	});

	it('a two-element layout at 1064 nm, against 64-digit BigNumber products', () => {
		const e1 = element(singlet(51.5, -51.5, 4.2, 'fused-silica'), 1064);
		const e2 = element(singlet(null, -38.6, 5.1, 'caf2'), 1064);
		const layout: Layout = { objectDistanceMm: 73.4, elements: [e1, e2], gapsMm: [12.25], backDistanceMm: 41.7 };
		const big = (x: number) => math.bignumber(x) as BigNumber;
		const bdiv = (a: BigNumber, b: BigNumber) => math.divide(a, b) as BigNumber;
		const bmat = (rows: BigNumber[][]) => math.matrix(rows) as Matrix;
		const bigT = (d: number, n = 1) => bmat([[big(1), bdiv(big(d), big(n))], [big(0), big(1)]]);
		const bigR = (n1: number, n2: number, r: number | null) =>
			bmat([[big(1), big(0)], [r === null ? big(0) : (math.unaryMinus(bdiv(math.subtract(big(n2), big(n1)) as BigNumber, big(r))) as BigNumber), big(1)]]);
		const nS = refractiveIndex('fused-silica', 1064),
			nC = refractiveIndex('caf2', 1064);
		const chain = [bigT(73.4), bigR(1, nS, 51.5), bigT(4.2, nS), bigR(nS, 1, -51.5), bigT(12.25), bigR(1, nC, null), bigT(5.1, nC), bigR(nC, 1, -38.6), bigT(41.7)];
		let ref = bmat([[big(1), big(0)], [big(0), big(1)]]);
		for (const s of chain) ref = math.multiply(s, ref) as Matrix;
		const refNums = (ref.toArray() as BigNumber[][]).flat().map((x) => Number(x.toString()));
		const ours = layoutMatrix(create(), layout);
		expect(matApproxEqual(ours, refNums, 1e-13)).toBe(true);
		expect(Number((math.det(ref) as unknown as BigNumber).toString())).toBeCloseTo(1, 30);
	});
});

describe('systems of elements and gaps', () => {
	it('two thin lenses: 1/f = 1/f1 + 1/f2 − d/(f1 f2) (Gullstrand; Hecht, Optics, 5th ed. §6.2, from memory)', () => {
		for (const [f1, f2, d] of [
			[100, 50, 30],
			[80, -40, 20],
			[-60, 150, 95]
		]) {
			const m = composeSystem(create(), [
				{ kind: 'element', element: thin(f1) },
				{ kind: 'gap', lengthMm: d },
				{ kind: 'element', element: thin(f2) }
			]);
			const c = systemCardinalPoints(m)!;
			expect(approxEqual(1 / c.eflMm, 1 / f1 + 1 / f2 - d / (f1 * f2), 1e-13)).toBe(true);
			// BFL of the pair: f2 (f1 − d) / (f1 + f2 − d) (same source)
			expect(approxEqual(c.bflMm, (f2 * (f1 - d)) / (f1 + f2 - d), 1e-12)).toBe(true);
		}
	});

	it('imaging condition: at the image found by imageAfter, B = 0 and A = magnification', () => {
		const e = element(singlet(51.5, -51.5, 4.2));
		const layout0: Layout = { objectDistanceMm: 120, elements: [e], gapsMm: [], backDistanceMm: 0 };
		const img = imageAfter(layoutMatrix(create(), layout0))!;
		const layout: Layout = { ...layout0, backDistanceMm: img.imageDistanceMm };
		const m = layoutMatrix(create(), layout);
		expect(isImaging(m, 1e-11)).toBe(true);
		expect(m[0]).toBeCloseTo(img.magnification, 12);
		expect(img.magnification).toBeLessThan(0); // real image of a real object: inverted
		expect(determinant(m)).toBeCloseTo(1, 14);
	});

	it('layout positions and track length add up', () => {
		const e1 = element(singlet(51.5, -51.5, 4.2)),
			e2 = element(singlet(38.6, null, 5.1));
		const layout: Layout = { objectDistanceMm: 20, elements: [e1, e2], gapsMm: [7], backDistanceMm: 30 };
		expect(firstVertexPositionsMm(layout)).toEqual([20, 31.2]);
		expect(trackLengthMm(layout)).toBeCloseTo(66.3, 12);
	});

	it('an object in the front focal plane images at infinity: imageAfter is null, not Infinity', () => {
		const m = composeSystem(create(), [
			{ kind: 'gap', lengthMm: 100 },
			{ kind: 'element', element: thin(100) }
		]);
		expect(imageAfter(m)).toBeNull();
	});
});
