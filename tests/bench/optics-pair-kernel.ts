/**
 * Micro-benchmark of the pair imaging kernel (issue 4, target ≥ 20 million pair
 * configurations per second on one core).
 *
 * One configuration = one ordered pair of oriented elements (i then j, i ≠ j) solved
 * for one (track, magnification) query: closed-form gap roots, each verified by its
 * full matrix, and every root not flagged non-physical put through the physical filter
 * (working distances, minimum gap, sag-based touch check). This is the solver's inner
 * loop. The snapshot holds invented demo singlets (both orientations), built once.
 *
 * Prints one human line and, last, one JSON line:
 *   {"bench":"optics-pair-kernel","configsPerSecond":...,...}
 */
import {
	buildElement,
	packElements,
	solvePairKernel,
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
const MIN_SECONDS = 3;

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

/** One sweep over all ordered pairs for one query; returns [configs, roots, physical]. */
function sweep(trackMm: number, m: number): [number, number, number] {
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
				const bad = physicalCheck(snapshot, i, j, out[o + fS], out[o + fG], out[o + fD], 2, 0.5);
				if (bad === 0) physical++;
			}
		}
	}
	return [n * (n - 1), roots, physical];
}

// Warm-up so the figure is for optimised code.
for (const [L, m] of queries) sweep(L, m);

let configs = 0,
	roots = 0,
	physical = 0,
	sweeps = 0;
// CPU time of this process, so that other work on a shared machine does not count
// against the kernel; wall time is reported beside it.
const cpu0 = process.cpuUsage();
const t0 = performance.now();
let elapsed = 0;
const perSweep: number[] = [];
while (elapsed < MIN_SECONDS * 1000) {
	const [L, m] = queries[sweeps % queries.length];
	const s0 = process.cpuUsage();
	const [c, r, p] = sweep(L, m);
	const ds = process.cpuUsage(s0);
	perSweep.push(c / ((ds.user + ds.system) / 1e6));
	configs += c;
	roots += r;
	physical += p;
	sweeps++;
	elapsed = performance.now() - t0;
}
const cpu = process.cpuUsage(cpu0);
const cpuSeconds = (cpu.user + cpu.system) / 1e6;
const wallSeconds = elapsed / 1000;
const configsPerSecond = configs / cpuSeconds;
perSweep.sort((a, b) => a - b);
const median = perSweep[Math.floor(perSweep.length / 2)];
console.log(
	`optics pair kernel: ${(configsPerSecond / 1e6).toFixed(1)} M configurations per CPU second on one core ` +
		`(median sweep ${(median / 1e6).toFixed(1)} M/s, wall ${(configs / wallSeconds / 1e6).toFixed(1)} M/s; ` +
		`${elements.length} oriented elements, ${sweeps} sweeps, ${configs} configurations, ${roots} roots, ` +
		`${physical} physical; target ≥ 20 M/s)`
);
console.log(
	JSON.stringify({
		bench: 'optics-pair-kernel',
		configsPerSecond: Math.round(configsPerSecond),
		medianSweepConfigsPerSecond: Math.round(median),
		wallConfigsPerSecond: Math.round(configs / wallSeconds),
		targetConfigsPerSecond: 20_000_000,
		elements: elements.length,
		configurations: configs,
		roots,
		physicalRoots: physical,
		cpuSeconds: Number(cpuSeconds.toFixed(3)),
		wallSeconds: Number(wallSeconds.toFixed(3))
	})
);
