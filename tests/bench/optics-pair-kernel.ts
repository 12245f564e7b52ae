/**
 * Micro-benchmark of the brute-force pair kernel (target ≥ 50 million configurations per
 * CPU second on one core), side by side with a bare loop in the same run.
 *
 * One configuration = one ordered pair of oriented elements (i then j, i ≠ j) solved
 * for one (track, magnification) query: closed-form gap roots, each verified by its
 * full matrix, and every root not flagged non-physical put through the physical filter
 * (working distances, minimum gap, sag-based touch check). The snapshot holds invented
 * demo singlets (both orientations), built once. Three loops over the same configurations:
 * - row: `solvePairRow`, a row i against every j with the physical filter fused in (the
 *   brute-force kernel; the figure against the target);
 * - pair: `solvePairKernel` then `checkPairPhysical` per pair (what other callers use);
 *   must find the same roots and physical roots as the row;
 * - bare: the same thick-element gap quadratic and its real roots only (no s and d, no
 *   verification, no physical filter), written out here: a floor for the machine's speed.
 * CPU time of this process (`process.cpuUsage`; the loops run on one thread), alternating in every round
 * (order swapped each round), each measured over ≥ 150 ms per round; medians over the
 * rounds, and the ratio row/bare as the median of the per-round ratios, which is what
 * stays stable on a noisy shared machine.
 *
 * Prints human lines and, last, one JSON line:
 *   {"bench":"optics-pair-kernel","configsPerSecond":...,"ratioToBare":...,...}
 */
import {
	buildElement,
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
} from '../../src/lib/optics';
import { mulberry32 } from '../../src/lib/prng';

const PARTS = 300; // → 600 oriented elements, 359 400 ordered pairs per query
const MIN_SECONDS = 4;
const MIN_ROUNDS = 7;
const MIN_ROUND_MS = 150;
const TARGET = 50e6;
const MIN_WD = 2,
	MIN_GAP = 0.5;

const rng = mulberry32;

function demoElements(): ThickElement[] {
	const r = rng(2024);
	const glasses = ['517642', '620364', '785257', 'fused-silica', 'caf2'];
	const out: ThickElement[] = [];
	while (out.length < 2 * PARTS) {
		const mag = () => 15 + 385 * r();
		const kind = r();
		const r1 = kind < 0.4 ? mag() : kind < 0.7 ? mag() : -mag();
		const r2 = kind < 0.4 ? -mag() : kind < 0.55 ? null : kind < 0.7 ? mag() * 2 : mag();
		const t = 2 + 6 * r();
		const ca = Math.min(5 + 35 * r(), 0.8 * Math.min(Math.abs(r1), r2 === null ? Infinity : Math.abs(r2)));
		const surfaces = [{ radiusMm: r1, thicknessMm: t, material: glasses[Math.floor(r() * glasses.length)] }, { radiusMm: r2 }];
		for (const reversed of [false, true]) {
			const e = buildElement(surfaces, 632.8, { clearApertureMm: ca, reversed });
			if (e.ok) out.push(e.value);
		}
	}
	return out;
}

const elements = demoElements();
const snapshot = packElements(elements);
const n = elements.length;
const out = new Float64Array(2 * ROOT_STRIDE);
const queries: [number, number][] = [
	[250, -1],
	[400, -2.5],
	[600, -0.25],
	[180, -1.4],
	[900, 3],
	[320, -0.8]
];

/** Pair path over all ordered pairs for one query; returns [configs, roots, physical]. */
function sweepPair(trackMm: number, m: number): [number, number, number] {
	// Function-local copies: on Node 20 every use of an imported binding (function or
	// constant) in a hot loop costs a module-cell load and check; callers should do this.
	const solve = solvePairKernel,
		physicalCheck = checkPairPhysical;
	const stride = ROOT_STRIDE,
		fFlags = ROOT_FLAGS,
		fS = ROOT_OBJECT_DISTANCE,
		fG = ROOT_GAP,
		fD = ROOT_BACK_DISTANCE,
		nonPhysical = ROOT_NON_PHYSICAL;
	let roots = 0,
		physical = 0;
	for (let i = 0; i < n; i++) {
		for (let j = 0; j < n; j++) {
			if (i === j) continue;
			const k = solve(snapshot, i, j, trackMm, m, out, 0);
			for (let q = 0; q < k; q++) {
				const o = q * stride;
				roots++;
				if ((out[o + fFlags] & nonPhysical) !== 0) continue;
				const bad = physicalCheck(snapshot, i, j, out[o + fS], out[o + fG], out[o + fD], MIN_WD, MIN_GAP);
				if (bad === 0) physical++;
			}
		}
	}
	return [n * (n - 1), roots, physical];
}

const columns = new Int32Array(n - 1);
const rowOut = new Float64Array(2 * (n - 1) * ROOT_STRIDE);
const rowColumns = new Int32Array(2 * (n - 1));

/** Row path: every j ≠ i for each i in one call; returns [configs, roots, physical]. */
function sweepRow(trackMm: number, m: number): [number, number, number] {
	const solveRow = solvePairRow,
		found = pairRowRootsFound;
	// Columns of row i: every j but i. From row i − 1 to row i only entry i − 1 changes.
	for (let w = 0; w < n - 1; w++) columns[w] = w + 1;
	let roots = 0,
		physical = 0;
	for (let i = 0; i < n; i++) {
		if (i > 0) columns[i - 1] = i - 1;
		physical += solveRow(snapshot, i, columns, n - 1, trackMm, m, MIN_WD, MIN_GAP, rowOut, rowColumns);
		roots += found[0];
	}
	return [n * (n - 1), roots, physical];
}

/** Bare loop: the gap quadratic and its real roots only; returns [configs, roots, checksum]. */
function sweepBare(trackMm: number, m: number): [number, number, number] {
	const snap = snapshot;
	const mu = m + 1 / m;
	let roots = 0,
		sum = 0;
	for (let i = 0; i < n; i++) {
		const o1 = i * 13;
		const a1 = snap[o1],
			b1 = snap[o1 + 1],
			c1 = snap[o1 + 2],
			d1 = snap[o1 + 3];
		const lam1 = trackMm - snap[o1 + 4];
		for (let j = 0; j < n; j++) {
			if (i === j) continue;
			const o2 = j * 13;
			const a2 = snap[o2],
				b2 = snap[o2 + 1],
				c2 = snap[o2 + 2],
				d2 = snap[o2 + 3];
			const lam = lam1 - snap[o2 + 4];
			const A0 = a2 * a1 + b2 * c1,
				A1 = a2 * c1,
				C0 = c2 * a1 + d2 * c1,
				C1 = c2 * c1,
				D0 = c2 * b1 + d2 * d1,
				D1 = c2 * d1;
			const qb = C0 - A1 - D1 - C1 * lam;
			const qc = mu - A0 - D0 - C0 * lam;
			const disc = qb * qb - 4 * C1 * qc;
			if (!(disc >= 0)) continue;
			const sq = Math.sqrt(disc);
			const q = -0.5 * (qb + (qb >= 0 ? sq : -sq));
			sum += q / C1 + qc / q;
			roots += 2;
		}
	}
	return [n * (n - 1), roots, sum];
}

type Sweep = (trackMm: number, m: number) => [number, number, number];
const loops: Record<'row' | 'pair' | 'bare', Sweep> = { row: sweepRow, pair: sweepPair, bare: sweepBare };
type LoopName = keyof typeof loops;

/** Every query once: [configs, roots, physical (or checksum)]. */
function allQueries(f: Sweep): [number, number, number] {
	let c = 0,
		r = 0,
		p = 0;
	for (const [L, m] of queries) {
		const [a, b, x] = f(L, m);
		c += a;
		r += b;
		p += x;
	}
	return [c, r, p];
}

function cpuMs(): number {
	const u = process.cpuUsage();
	return (u.user + u.system) / 1000;
}

// Warm-up (optimised code) and, per loop, how many passes over the queries make a
// measurement of at least MIN_ROUND_MS of CPU time.
const reps: Record<LoopName, number> = { row: 1, pair: 1, bare: 1 };
const once: Record<LoopName, [number, number, number]> = { row: [0, 0, 0], pair: [0, 0, 0], bare: [0, 0, 0] };
for (const name of Object.keys(loops) as LoopName[]) {
	for (let w = 0; w < 3; w++) once[name] = allQueries(loops[name]);
	const t = cpuMs();
	allQueries(loops[name]);
	const ms = Math.max(cpuMs() - t, 1);
	reps[name] = Math.max(1, Math.ceil(MIN_ROUND_MS / ms));
}
// The row must give what the pair path gives.
if (once.row[0] !== once.pair[0] || once.row[1] !== once.pair[1] || once.row[2] !== once.pair[2]) {
	console.error(`row and pair paths differ: row ${once.row.join('/')} pair ${once.pair.join('/')}`);
	process.exit(1);
}

const rates: Record<LoopName, number[]> = { row: [], pair: [], bare: [] };
const totals: Record<LoopName, { configs: number; cpuMs: number }> = {
	row: { configs: 0, cpuMs: 0 },
	pair: { configs: 0, cpuMs: 0 },
	bare: { configs: 0, cpuMs: 0 }
};
const ratios: number[] = [];
const pairRatios: number[] = [];
const t0 = performance.now();
let rounds = 0;
while (rounds < MIN_ROUNDS || performance.now() - t0 < MIN_SECONDS * 1000) {
	const order: LoopName[] = rounds % 2 === 0 ? ['row', 'pair', 'bare'] : ['bare', 'pair', 'row'];
	const rate: Record<LoopName, number> = { row: 0, pair: 0, bare: 0 };
	for (const name of order) {
		let c = 0;
		const t = cpuMs();
		for (let k = 0; k < reps[name]; k++) c += allQueries(loops[name])[0];
		const ms = cpuMs() - t;
		rate[name] = c / (ms / 1000);
		rates[name].push(rate[name]);
		totals[name].configs += c;
		totals[name].cpuMs += ms;
	}
	ratios.push(rate.row / rate.bare);
	pairRatios.push(rate.pair / rate.bare);
	rounds++;
}
const wallSeconds = (performance.now() - t0) / 1000;
const median = (xs: number[]) => {
	const s = [...xs].sort((a, b) => a - b);
	const h = s.length >> 1;
	return s.length % 2 ? s[h] : 0.5 * (s[h - 1] + s[h]);
};
const rowRate = median(rates.row),
	pairRate = median(rates.pair),
	bareRate = median(rates.bare);
const ratioToBare = median(ratios);
const pairRatioToBare = median(pairRatios);
const [configsPerPass, roots, physical] = once.row;
const M = (x: number) => (x / 1e6).toFixed(1);
console.log(
	`optics pair kernel, ${rounds} rounds alternating, median M configurations per CPU second on one core: ` +
		`row (solvePairRow) ${M(rowRate)}, pair (solvePairKernel + checkPairPhysical) ${M(pairRate)}, bare loop ${M(bareRate)}`
);
console.log(
	`ratio to the bare loop (median of the rounds): row ${ratioToBare.toFixed(3)}, pair ${pairRatioToBare.toFixed(3)}; ` +
		`row/pair ${(rowRate / pairRate).toFixed(2)}; target ≥ ${M(TARGET)} M/s: ${rowRate >= TARGET ? 'met' : 'NOT met'} ` +
		`(${elements.length} oriented elements; per pass over the ${queries.length} queries ${configsPerPass} configurations, ` +
		`${roots} roots, ${physical} physical)`
);
console.log(
	JSON.stringify({
		bench: 'optics-pair-kernel',
		configsPerSecond: Math.round(totals.row.configs / (totals.row.cpuMs / 1000)),
		medianSweepConfigsPerSecond: Math.round(rowRate),
		wallConfigsPerSecond: Math.round((totals.row.configs + totals.pair.configs + totals.bare.configs) / wallSeconds),
		targetConfigsPerSecond: TARGET,
		elements: elements.length,
		configurations: totals.row.configs,
		roots: roots * (totals.row.configs / configsPerPass),
		physicalRoots: physical * (totals.row.configs / configsPerPass),
		cpuSeconds: Number((totals.row.cpuMs / 1000).toFixed(3)),
		wallSeconds: Number(wallSeconds.toFixed(3)),
		bareConfigsPerCpuSecond: Math.round(bareRate),
		pairConfigsPerCpuSecond: Math.round(pairRate),
		ratioToBare: Number(ratioToBare.toFixed(3)),
		pairRatioToBare: Number(pairRatioToBare.toFixed(3)),
		rounds,
		target: TARGET
	})
);
