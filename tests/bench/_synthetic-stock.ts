/**
 * An invented stock of N lenses for the solver's benchmark and tests: singlets of several
 * shapes and cemented doublets with round focal lengths, from the thin-lens lensmaker's
 * equation (the thick elements then differ slightly; that does not matter for a load test).
 * Not taken from any catalogue.
 */
import type { CandidatePart } from '../../src/lib/server/solver/elements';
import { mulberry32 } from '../../src/lib/prng';

const prng = mulberry32;

const GLASSES: [string, number][] = [
	['517642', 1.517],
	['589613', 1.589],
	['620364', 1.62],
	['785258', 1.785],
	['fused-silica', 1.4585]
];
const DIAMETERS = [12.7, 25.4, 50.8];
const FOCALS = [15, 20, 25, 30, 35, 40, 45, 50, 60, 75, 80, 100, 125, 150, 175, 200, 250, 300, 400, 500, 750, 1000];

/** N invented parts with ids 1..N, all with available units in one of 12 drawers. */
export function syntheticStock(count: number, seed = 7): CandidatePart[] {
	const r = prng(seed);
	const out: CandidatePart[] = [];
	while (out.length < count) {
		const d = DIAMETERS[Math.floor(r() * DIAMETERS.length)];
		const [code, n] = GLASSES[Math.floor(r() * GLASSES.length)];
		const sign = r() < 0.2 ? -1 : 1;
		const f = sign * FOCALS[Math.floor(r() * FOCALS.length)] * (0.97 + 0.06 * r());
		const shape = r();
		let r1: number | null, r2: number | null, kind: string;
		if (shape < 0.4) {
			kind = sign > 0 ? 'plano-convex' : 'plano-concave';
			r1 = (n - 1) * f;
			r2 = null;
		} else if (shape < 0.7) {
			kind = sign > 0 ? 'biconvex' : 'biconcave';
			r1 = 2 * (n - 1) * f;
			r2 = -r1;
		} else {
			kind = sign > 0 ? 'positive-meniscus' : 'negative-meniscus';
			const q = 2.5;
			r1 = (2 * f * (n - 1)) / (q + 1);
			r2 = (2 * f * (n - 1)) / (q - 1);
		}
		const semi = (0.9 * d) / 2;
		const minR = Math.min(Math.abs(r1 ?? Infinity), Math.abs(r2 ?? Infinity));
		if (semi >= 0.98 * minR) continue;
		const sag = (rad: number | null) => (rad === null ? 0 : rad - Math.sign(rad) * Math.sqrt(rad * rad - (d / 2) ** 2));
		const edgeNeed = 1.5 - sag(r2 ?? null) + sag(r1);
		const ct = Math.max(1.5, edgeNeed, Number.isFinite(edgeNeed) ? edgeNeed : 2);
		if (!Number.isFinite(ct) || (d / 2 > minR)) continue;
		const id = out.length + 1;
		const available = 1 + Math.floor(r() * 4);
		out.push({
			partId: id,
			sku: `SYN-${String(id).padStart(4, '0')}`,
			name: `Synthetic ${kind} Ø${d} f ${f.toFixed(1)}`,
			kind,
			diameterMm: d,
			clearApertureMm: null,
			surfaces: [{ radiusMm: r1, thicknessMm: Math.round(ct * 10) / 10, material: code }, { radiusMm: r2 }],
			eflMm: f,
			bflMm: null,
			centerThicknessMm: ct,
			designWavelengthNm: 587.6,
			measured: null,
			onHand: available,
			available,
			locations: [{ locationId: 1 + (id % 12), code: `S${1 + (id % 12)}`, name: `Synthetic drawer ${1 + (id % 12)}`, quantity: available }]
		});
	}
	return out;
}

/**
 * The four imaging questions of the solver benchmark (solver-3000.ts, and the proof's profile):
 * different magnifications, tracks, NA and field heights, each with the limits the benchmark asks.
 */
export const BENCH_QUESTIONS = [
	{ trackMm: 300, magnification: -0.5, objectNA: 0.05, objectHeightMm: 2 },
	{ trackMm: 250, magnification: -1, objectNA: 0.08, objectHeightMm: 1 },
	{ trackMm: 500, magnification: -4, objectNA: 0.1, objectHeightMm: 0.5 },
	{ trackMm: 180, magnification: -0.25, objectNA: 0.03, objectHeightMm: 4 }
].map((q) => ({ ...q, wavelengthNm: 587.6, minGapMm: 1, minWorkingDistanceMm: 5, limit: 10, timeBudgetMs: 10_000 }));
