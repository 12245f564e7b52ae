/**
 * Where the exact proof's time goes (a helper for work on the solver, not run by `npm run bench`):
 * the four questions of solver-3000.ts solved inline (one thread, so CPU profiles are whole),
 * with the proof's time, whether it was proven, the physical roots and the answers (spot/Airy and
 * working distance). Q=k runs question k only; PROF=1 writes a V8 CPU profile per question to
 * /tmp/prof/q<k>.cpuprofile; BENCH_PARTS sets the stock size (default 3,000).
 */
import fs from 'node:fs';
import { Session } from 'node:inspector/promises';
import { syntheticStock, BENCH_QUESTIONS } from './_synthetic-stock';
import { solveWithStock, type StockView } from '../../src/lib/server/solver/solve';
import { imagingRequestSchema } from '../../src/lib/solver/request';
const PARTS = Number(process.env.BENCH_PARTS ?? 3000);
const stock: StockView = { key: 'p', parts: syntheticStock(PARTS) };
const qs = BENCH_QUESTIONS.map((q) => imagingRequestSchema.parse(q));
const which = process.env.Q ? [Number(process.env.Q)] : [0, 1, 2, 3];
const session = new Session();
session.connect();
if (process.env.PROF) { await session.post('Profiler.enable'); await session.post('Profiler.setSamplingInterval', { interval: 200 }); }
for (const k of which) {
	if (process.env.PROF) await session.post('Profiler.start');
	const t = performance.now();
	const r = await solveWithStock(stock, qs[k], { inline: true });
	console.log(k, (performance.now() - t).toFixed(0), 'ms', 'proof', r.stats.provingMs, r.stats.provenBest, r.stats.physicalRoots, r.solutions.map((s) => s.spot.ratioToAiry?.toFixed(2) + '/' + Math.round(Math.min(s.objectDistanceMm, s.backDistanceMm))).join(' '));
	if (process.env.PROF) { const { profile } = await session.post('Profiler.stop'); fs.writeFileSync(`/tmp/prof/q${k}.cpuprofile`, JSON.stringify(profile)); }
}
process.exit(0);
