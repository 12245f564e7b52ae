/**
 * Mode beam of Build from stock on the 3,000-part invented stock (about 25 million ordered pair
 * configurations with both orientations at 1064 nm): end-to-end solve time through the worker
 * pool, with the element snapshot cached (as after the first solve of a stock version) and, once,
 * cold. Target: under 1 s on the 2-core machine. Questions: the issue's focusing example, collimating
 * a fibre's output, coupling into a single-mode fibre, and a general waist-to-waist relay.
 * Prints the figures and a final JSON line.
 */
import { syntheticStock } from './_synthetic-stock';
import type { StockView } from '../../src/lib/server/solver/solve';
import { solveBeamWithStock } from '../../src/lib/server/solver/beam-solve';
import { solveRequestSchema, type ParsedBeamRequest } from '../../src/lib/solver/request';
import { warmUp } from '../../src/lib/server/solver/pool';

const PARTS = 3000;
const stock: StockView = { key: 'bench-beam-3000', parts: syntheticStock(PARTS) };
const questions: { label: string; q: ParsedBeamRequest }[] = [
	{ label: 'focus 2 mm → 40 µm at 250 mm', q: { input: { waistDiameterMm: 2, waistPositionMm: -100 }, target: { waistDiameterMm: 0.04, waistPositionMm: 250 } } },
	{ label: 'collimate a 6 µm fibre mode to 3 mm', q: { input: { waistDiameterMm: 0.006, waistPositionMm: 0 }, target: { waistDiameterMm: 3, waistPositionMm: 400 } } },
	{ label: 'into a fibre (MFD 6.2 µm) from 3 mm', q: { input: { waistDiameterMm: 3, waistPositionMm: -50 }, target: { fibre: { modeFieldDiameterMm: 0.0062 }, waistPositionMm: 200 } } },
	{ label: 'waist to waist 1 mm → 0.5 mm, M² 1.3', q: { input: { waistDiameterMm: 1, waistPositionMm: -200, mSquared: 1.3 }, target: { waistDiameterMm: 0.5, waistPositionMm: 400 } } }
].map(({ label, q }) => ({
	label,
	q: solveRequestSchema.parse({ mode: 'beam', wavelengthNm: 1064, minGapMm: 1, minWorkingDistanceMm: 5, minClearance: 1.5, limit: 10, ...q }) as ParsedBeamRequest
}));

const workers = await warmUp();
const tCold = performance.now();
const cold = await solveBeamWithStock(stock, questions[0].q);
const coldMs = performance.now() - tCold;
console.log(`cold (snapshot build + search): ${coldMs.toFixed(0)} ms, ${cold.stats.elementsConsidered} elements, ${workers} workers`);

const times: number[] = [];
for (let round = 0; round < 3; round++) {
	for (const { label, q } of questions) {
		const t = performance.now();
		const r = await solveBeamWithStock(stock, q);
		const ms = performance.now() - t;
		times.push(ms);
		if (round === 0) {
			const best = r.solutions[0];
			console.log(
				`${label}: ${ms.toFixed(0)} ms (search ${r.stats.searchMs} ms, ${r.stats.configurationsEvaluated.toLocaleString('en')} pairs solved, ${r.stats.physicalRoots.toLocaleString('en')} physical answers), ` +
					`best ${best ? `${best.elements.map((e) => e.sku).join(' + ')} η ${best.beam.efficiency.toFixed(4)} length ${best.beam.lengthMm.toFixed(1)} mm` : `none (${r.noAnswer?.reason})`}` +
					(r.stats.truncated ? ' (TRUNCATED)' : '')
			);
		}
	}
}
times.sort((a, b) => a - b);
const median = times[Math.floor(times.length / 2)];
const worst = times[times.length - 1];
console.log(`warm end-to-end over ${times.length} solves: median ${median.toFixed(0)} ms, worst ${worst.toFixed(0)} ms (target < 1000 ms)`);
console.log(
	JSON.stringify({ bench: 'solver-beam-3000', parts: PARTS, workers, coldMs: Math.round(coldMs), medianMs: Math.round(median), worstMs: Math.round(worst), targetMs: 1000, pass: worst < 1000 })
);
process.exit(0);
