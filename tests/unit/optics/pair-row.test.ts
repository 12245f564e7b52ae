/**
 * The brute-force search's row kernel (`solvePairRow`) against what it stands for: for every
 * column, `solvePairKernel` and then `checkPairPhysical` on each root the kernel does not
 * flag. Same roots bit for bit (every number, signed zeros included), same columns, same
 * order and the same count of roots found, over seeded random invented lenses, random
 * questions and minimums, and the rare cases (a window with no power, m = ±1).
 */
import { describe, expect, it } from 'vitest';
import {
	buildElement,
	reverseElement,
	packElements,
	solvePairKernel,
	solvePairRow,
	pairRowRootsFound,
	checkPairPhysical,
	ROOT_STRIDE,
	ROOT_FLAGS,
	ROOT_NON_PHYSICAL,
	ROOT_OBJECT_DISTANCE,
	ROOT_GAP,
	ROOT_BACK_DISTANCE,
	type ThickElement
} from '../../../src/lib/optics';
import { rng, uniform, randomSinglet, singlet, element } from './helpers';

function randomElements(seed: number, parts: number): ThickElement[] {
	const r = rng(seed);
	const out: ThickElement[] = [];
	for (let k = 0; k < parts; k++) {
		const s = randomSinglet(r);
		// Half the parts carry an outer diameter beyond the clear aperture, so neighbours
		// meet with equal and with different glass edges.
		const outer = r() < 0.5 ? null : s.clearApertureMm * uniform(r, 1, 1.15);
		for (const reversed of [false, true]) {
			const e = buildElement(s.surfaces, 587.5618, { clearApertureMm: s.clearApertureMm, outerDiameterMm: outer, reversed });
			if (e.ok) out.push(e.value);
		}
	}
	// Rare cases: a flat window (no power), and two equal lenses (m = −1 at their afocal gap).
	out.push(element(singlet(null, null, 3), 587.5618, 20));
	const twin = singlet(80, -80, 4);
	out.push(element(twin, 587.5618, 20), element(twin, 587.5618, 20));
	return out;
}

/** What the row must give: the pair kernel and the physical filter, column by column. */
function expected(snap: Float64Array, i: number, columns: Int32Array, count: number, L: number, m: number, minS: number, minG: number) {
	const roots: number[] = [];
	const cols: number[] = [];
	let found = 0;
	const buf = new Float64Array(2 * ROOT_STRIDE);
	for (let w = 0; w < count; w++) {
		const j = columns[w];
		const k = solvePairKernel(snap, i, j, L, m, buf, 0);
		found += k;
		for (let r = 0; r < k; r++) {
			const o = r * ROOT_STRIDE;
			if ((buf[o + ROOT_FLAGS] & ROOT_NON_PHYSICAL) !== 0) continue;
			if (checkPairPhysical(snap, i, j, buf[o + ROOT_OBJECT_DISTANCE], buf[o + ROOT_GAP], buf[o + ROOT_BACK_DISTANCE], minS, minG) !== 0) continue;
			for (let x = 0; x < ROOT_STRIDE; x++) roots.push(buf[o + x]);
			cols.push(j);
		}
	}
	return { roots, cols, found };
}

/** The bit patterns of doubles, so that −0 ≠ 0 and every last bit counts. */
function bits(xs: ArrayLike<number>): string[] {
	const f = new Float64Array(Array.from(xs));
	return Array.from(new BigUint64Array(f.buffer), (b) => b.toString(16));
}

describe('solvePairRow: the pair kernel and the physical filter, row at a time', () => {
	it('gives bit-identical physical roots, columns and root counts over random lenses and questions (seeded)', () => {
		const elements = randomElements(15, 30);
		const snap = packElements(elements);
		const n = elements.length;
		const r = rng(1503);
		const out = new Float64Array(2 * (n + 8) * ROOT_STRIDE);
		const outColumns = new Int32Array(2 * (n + 8));
		const columns = new Int32Array(n + 8);
		let physical = 0,
			found = 0,
			questions = 0;
		const mismatches: string[] = [];
		for (let q = 0; q < 60; q++) {
			const L = uniform(r, 40, 1200);
			const pick = r();
			const m = pick < 0.1 ? -1 : pick < 0.15 ? 1 : (r() < 0.75 ? -1 : 1) * Math.exp(uniform(r, -2.5, 2.5));
			const minS = [0, 1, 2, 5, -3][Math.floor(r() * 5)];
			const minG = [0, 0.5, 2, -1][Math.floor(r() * 4)];
			questions++;
			for (let i = 0; i < n; i++) {
				// Every column but i in order, or a shuffled selection with repeats (and i itself).
				let count = 0;
				if (q % 3 === 0) {
					const k = Math.floor(uniform(r, 1, n + 8));
					for (let w = 0; w < k; w++) columns[count++] = Math.floor(r() * n);
				} else {
					for (let j = 0; j < n; j++) if (j !== i) columns[count++] = j;
				}
				const want = expected(snap, i, columns, count, L, m, minS, minG);
				const k = solvePairRow(snap, i, columns, count, L, m, minS, minG, out, outColumns);
				const got = { roots: bits(out.subarray(0, k * ROOT_STRIDE)), cols: Array.from(outColumns.subarray(0, k)), found: pairRowRootsFound[0] };
				const exp = { roots: bits(want.roots), cols: want.cols, found: want.found };
				if (JSON.stringify(got) !== JSON.stringify(exp)) mismatches.push(`L=${L} m=${m} minS=${minS} minG=${minG} i=${i}`);
				physical += k;
				found += want.found;
			}
		}
		expect(mismatches).toEqual([]);
		expect(questions).toBe(60);
		// The comparison is not empty: many roots, many of them physical.
		expect(found).toBeGreaterThan(20_000);
		expect(physical).toBeGreaterThan(2_000);
	});

	it('hands the rare pairs to the kernel: an afocal root (a lens and its mirror image at m = −1), a window', () => {
		const lens = element(singlet(60, null, 4), 587.5618, 20);
		const window = element(singlet(null, null, 3), 587.5618, 20);
		const snap = packElements([lens, reverseElement(lens), window]);
		const out = new Float64Array(4 * ROOT_STRIDE);
		const outColumns = new Int32Array(4);
		// One of the gap quadratic's two roots is afocal (C = 0) and images nowhere: the kernel
		// finds one root, at s = d.
		const k = solvePairRow(snap, 0, Int32Array.of(1), 1, 400, -1, 1, 0.5, out, outColumns);
		const want = expected(snap, 0, Int32Array.of(1), 1, 400, -1, 1, 0.5);
		expect(want.found).toBe(1);
		expect(k).toBe(1);
		expect(outColumns[0]).toBe(1);
		expect(bits(out.subarray(0, ROOT_STRIDE))).toEqual(bits(want.roots));
		expect(out[ROOT_OBJECT_DISTANCE]).toBeCloseTo(out[ROOT_BACK_DISTANCE], 9);
		expect(pairRowRootsFound[0]).toBe(1);
		// A window has no power: the gap equation is linear and degenerate (only s + g counts),
		// and the kernel gives no root; so does the row.
		expect(solvePairRow(snap, 2, Int32Array.of(0, 1), 2, 400, -1.5, 1, 0.5, out, outColumns)).toBe(0);
		expect(pairRowRootsFound[0]).toBe(expected(snap, 2, Int32Array.of(0, 1), 2, 400, -1.5, 1, 0.5).found);
	});
});
