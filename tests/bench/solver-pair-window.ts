/**
 * The output-sensitive pair search (partner-index.ts) against the brute-force one, on the
 * 3,000-part invented stock and the solver-3000 questions: single-thread CPU time
 * (`process.cpuUsage`) of one search shard holding every row, for the screening pass (top 400
 * by the paraxial screen) and for a bounding pass (window up to the N-th answer's key, as the
 * solve's last bounding pass sees it: the key of the N-th answer returned), brute force and
 * partner ranges alternating in the same run, and the configurations each visits. Checks on the
 * way that both keep the same records. Prints a final JSON line.
 */
import { syntheticStock } from './_synthetic-stock';
import { solveWithStock, snapshotFor, BOUND_PASS_K, TOP_K_PER_SHARD, type StockView } from '../../src/lib/server/solver/solve';
import { searchShard, searchParamsOf, REC_STRIDE, type ShardInput, type ShardResult, snapshotArrays } from '../../src/lib/solver/search/search-kernel';
import { imagingRequestSchema } from '../../src/lib/solver/request';
import { packRankKey, rankKey } from '../../src/lib/solver/ranking';

const PARTS = Number(process.env.BENCH_PARTS ?? 3000);
const ROUNDS = 2;
const stock: StockView = { key: `bench-window-${PARTS}`, parts: syntheticStock(PARTS) };
const questions = [
	{ trackMm: 300, magnification: -0.5, objectNA: 0.05, objectHeightMm: 2 },
	{ trackMm: 250, magnification: -1, objectNA: 0.08, objectHeightMm: 1 },
	{ trackMm: 500, magnification: -4, objectNA: 0.1, objectHeightMm: 0.5 },
	{ trackMm: 180, magnification: -0.25, objectNA: 0.03, objectHeightMm: 4 }
].map((q) => imagingRequestSchema.parse({ ...q, wavelengthNm: 587.6, minGapMm: 1, minWorkingDistanceMm: 5, limit: 10 }));

const { snapshot: snap } = snapshotFor(stock, 587.6);
const candidates = Int32Array.from(snap.elements.map((_, e) => e));
const partUnits = Int32Array.from(snap.parts.map((p) => p.available));

function run(input: Omit<ShardInput, 'bruteForce'>, bruteForce: boolean): { r: ShardResult; ms: number } {
	const t = process.cpuUsage();
	const r = searchShard({ ...input, bruteForce });
	const u = process.cpuUsage(t);
	return { r, ms: (u.user + u.system) / 1000 };
}

/** The records as sortable strings (elements, placement, key). */
function recordSet(r: ShardResult): string {
	const out: string[] = [];
	for (let k = 0; k < r.count; k++) out.push(Array.from(r.records.subarray(k * REC_STRIDE, k * REC_STRIDE + 8)).join(','));
	return out.sort().join(';');
}

const total = { screen: { brute: 0, window: 0 }, bound: { brute: 0, window: 0 } };
const configs = { screen: { brute: 0, window: 0 }, bound: { brute: 0, window: 0 } };
let same = true;
for (const q of questions) {
	// The N-th answer's key from a full solve (inline: this thread).
	const solved = await solveWithStock(stock, q, { inline: true });
	const nth = solved.solutions[q.limit - 1];
	const bar = nth ? packRankKey(rankKey(nth)) : Infinity;
	const base = {
		...snapshotArrays(snap),
		partUnits,
		candidates,
		params: searchParamsOf(q),
		shardIndex: 0,
		shardCount: 1,
		deadline: Date.now() + 600_000
	};
	const passes = [
		['screen', { ...base, topK: TOP_K_PER_SHARD, boundRange: null }],
		['bound', { ...base, topK: BOUND_PASS_K, boundRange: { min: -Infinity, max: bar } }]
	] as const;
	const line: string[] = [`m = ${q.magnification}, L = ${q.trackMm} mm:`];
	for (const [name, input] of passes) {
		const ms = { brute: 0, window: 0 };
		for (let round = 0; round < ROUNDS; round++) {
			// Alternate which goes first.
			const order = round % 2 === 0 ? [true, false] : [false, true];
			const got: Record<string, ShardResult> = {};
			for (const brute of order) {
				const { r, ms: t } = run(input, brute);
				ms[brute ? 'brute' : 'window'] += t / ROUNDS;
				got[brute ? 'brute' : 'window'] = r;
			}
			if (recordSet(got.brute) !== recordSet(got.window)) {
				same = false;
				console.log(`  ${name}: the records differ (brute force ${got.brute.count}, partner ranges ${got.window.count})`);
			}
			if (round === 0) {
				configs[name].brute += got.brute.configurationsEvaluated;
				configs[name].window += got.window.configurationsEvaluated;
				line.push(`${name}: configurations ${got.brute.configurationsEvaluated.toLocaleString('en')} → ${got.window.configurationsEvaluated.toLocaleString('en')}`);
			}
		}
		line[line.length - 1] += `, ${ms.brute.toFixed(0)} → ${ms.window.toFixed(0)} ms CPU (mean of ${ROUNDS})`;
		total[name].brute += ms.brute;
		total[name].window += ms.window;
	}
	console.log(line.join('\n  '));
}
const ratio = (x: { brute: number; window: number }) => +(x.window / x.brute).toFixed(3);
console.log(
	`over ${questions.length} questions, mean of ${ROUNDS} rounds: screening pass ${total.screen.brute.toFixed(0)} → ${total.screen.window.toFixed(0)} ms CPU (×${ratio(total.screen)}), ` +
		`bounding pass ${total.bound.brute.toFixed(0)} → ${total.bound.window.toFixed(0)} ms CPU (×${ratio(total.bound)}); ` +
		`configurations ×${ratio(configs.screen)} (screening), ×${ratio(configs.bound)} (bounding); same records: ${same}`
);
console.log(
	JSON.stringify({
		bench: 'solver-pair-window',
		parts: PARTS,
		elements: candidates.length,
		screenCpuMs: { brute: Math.round(total.screen.brute), window: Math.round(total.screen.window), ratio: ratio(total.screen) },
		boundCpuMs: { brute: Math.round(total.bound.brute), window: Math.round(total.bound.window), ratio: ratio(total.bound) },
		configurations: configs,
		sameRecords: same,
		pass: same
	})
);
process.exit(same ? 0 : 1);
