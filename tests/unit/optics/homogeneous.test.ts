import { describe, expect, it } from 'vitest';
import {
	pointTransferMatrix,
	transformPoint,
	createMat3,
	point,
	join,
	meet,
	rayLine,
	toCartesian,
	determinant3,
	composeSystem,
	create,
	cardinalPoints,
	approxEqual,
	type SystemStep
} from '../../../src/lib/optics';
import { element, singlet, rng, uniform, randomSinglet, mul } from './helpers';

describe('join and meet', () => {
	it('the meet of two lines through a point is that point, the join of two points contains both', () => {
		const p = point(3, 4),
			q = point(-2, 1.5);
		const l = join(new Float64Array(3), p, q);
		expect(l[0] * p[0] + l[1] * p[1] + l[2] * p[2]).toBeCloseTo(0, 12);
		expect(l[0] * q[0] + l[1] * q[1] + l[2] * q[2]).toBeCloseTo(0, 12);
		const a = rayLine(new Float64Array(3), 3, 4, 0.25),
			b = rayLine(new Float64Array(3), 3, 4, -1.5);
		const x = toCartesian(meet(new Float64Array(3), a, b))!;
		expect(x.zMm).toBeCloseTo(3, 12);
		expect(x.yMm).toBeCloseTo(4, 12);
	});

	it('parallel lines meet at infinity: toCartesian gives null', () => {
		const a = rayLine(new Float64Array(3), 0, 1, 0.1),
			b = rayLine(new Float64Array(3), 5, 3, 0.1);
		expect(toCartesian(meet(new Float64Array(3), a, b))).toBeNull();
	});
});

describe('point transfer matrix', () => {
	/**
	 * Independent reference: trace two paraxial rays from the object point through the
	 * plane-to-plane matrix (written out here) and intersect them in image space.
	 */
	function imageByTwoRays(m: ArrayLike<number>, zIn: number, zOut: number, zo: number, yo: number) {
		const out = (u: number) => {
			const y = yo + u * (zIn - zo);
			return { y: m[0] * y + m[1] * u, u: m[2] * y + m[3] * u };
		};
		const r1 = out(0.01),
			r2 = out(-0.023);
		// y1 + u1 (z − zOut) = y2 + u2 (z − zOut)
		const dz = (r2.y - r1.y) / (r1.u - r2.u);
		return { zMm: zOut + dz, yMm: r1.y + r1.u * dz };
	}

	it('agrees with two traced paraxial rays, for random thick lenses, pairs and object points (seeded)', () => {
		const r = rng(4242);
		for (let trial = 0; trial < 200; trial++) {
			const a = randomSinglet(r);
			const e1 = element(a.surfaces, 550);
			const steps: SystemStep[] = [{ kind: 'element', element: e1 }];
			let length = e1.thicknessMm;
			if (r() < 0.5) {
				const g = uniform(r, 1, 80);
				const e2 = element(randomSinglet(r).surfaces, 550);
				steps.push({ kind: 'gap', lengthMm: g }, { kind: 'element', element: e2 });
				length += g + e2.thicknessMm;
			}
			const m = composeSystem(create(), steps);
			const zIn = uniform(r, 0, 300);
			const zOut = zIn + length;
			const zo = zIn - uniform(r, 5, 800),
				yo = uniform(r, -20, 20);
			const P = pointTransferMatrix(createMat3(), m, zIn, zOut);
			expect(determinant3(P)).toBeCloseTo(1, 9);
			const img = toCartesian(transformPoint(new Float64Array(3), P, point(zo, yo)));
			const ref = imageByTwoRays(m, zIn, zOut, zo, yo);
			if (img === null) continue; // object in the front focal plane
			expect(approxEqual(img.zMm, ref.zMm, 1e-7)).toBe(true);
			expect(approxEqual(img.yMm, ref.yMm, 1e-7)).toBe(true);
		}
	});

	it('maps a direction (object at infinity) into the back focal plane at height f·slope', () => {
		const e = element(singlet(51.5, -51.5, 4.2));
		const c = cardinalPoints(e.matrix)!;
		const P = pointTransferMatrix(createMat3(), e.matrix, 10, 10 + e.thicknessMm);
		const dir = new Float64Array([0, 1, 0.02]);
		const img = toCartesian(transformPoint(new Float64Array(3), P, dir))!;
		expect(img.zMm).toBeCloseTo(10 + e.thicknessMm + c.bflMm, 10);
		expect(img.yMm).toBeCloseTo(c.eflMm * 0.02, 10);
	});

	it('a point in the front focal plane maps to infinity (w′ = 0)', () => {
		const e = element(singlet(51.5, -51.5, 4.2));
		const c = cardinalPoints(e.matrix)!;
		const P = pointTransferMatrix(createMat3(), e.matrix, 0, e.thicknessMm);
		const img = transformPoint(new Float64Array(3), P, point(-c.fflMm, 3));
		expect(toCartesian(img)).toBeNull();
	});

	it('composes: P(system) = P(second part) · P(first part) for planes placed consistently', () => {
		const e1 = element(singlet(51.5, -51.5, 4.2)),
			e2 = element(singlet(null, -38.6, 5.1));
		const g = 25;
		const P1 = pointTransferMatrix(createMat3(), e1.matrix, 0, e1.thicknessMm);
		const z2 = e1.thicknessMm + g;
		const P2 = pointTransferMatrix(createMat3(), e2.matrix, z2, z2 + e2.thicknessMm);
		const m = mul(Array.from(e2.matrix), mul([1, g, 0, 1], Array.from(e1.matrix)));
		const P = pointTransferMatrix(createMat3(), m, 0, z2 + e2.thicknessMm);
		const prod = new Float64Array(9);
		for (let i = 0; i < 3; i++)
			for (let j = 0; j < 3; j++) {
				let s = 0;
				for (let k = 0; k < 3; k++) s += P2[3 * i + k] * P1[3 * k + j];
				prod[3 * i + j] = s;
			}
		for (let k = 0; k < 9; k++) expect(approxEqual(prod[k], P[k], 1e-11)).toBe(true);
	});
});
