/**
 * Mode `afocal`, one shard: every ordered pair (first element in this shard) made afocal by the
 * gap from the thick matrices (`afocalGapMm`), kept when the expansion |A| is within tolerance,
 * the gap and the rims allow it, the length is within the limit, the intermediate focus is as
 * asked, and the paraxial beam fits every clear aperture with the asked clearance. Every pair that
 * passes is returned (there is one gap per pair, so one answer): the final ranking needs a real-ray
 * trace, done on the main thread for all of them (no screen).
 *
 * Runs in a worker thread (search-worker.ts) and, for tests, on the main thread. No framework or
 * database imports.
 */
import { ELEMENT_STRIDE, EL_A, EL_B, EL_C, EL_D, EL_THICKNESS, EL_SEMI_APERTURE } from '../../optics/snapshot';
import { afocalGapMm, focusAfterMm } from '../../optics/afocal';
import { checkPairPhysical, PHYS_GAP, PHYS_SURFACES_TOUCH, PHYS_APERTURE } from '../../optics/physical';

export const AREC_STRIDE = 7;
export const AREC_I = 0;
export const AREC_J = 1;
export const AREC_GAP = 2;
/** Signed A of the pair (the expansion; negative: inverted). */
export const AREC_A = 3;
export const AREC_LENGTH = 4;
/** Smallest clear aperture over paraxial beam diameter at the four vertices. */
export const AREC_CLEARANCE = 5;
/** Focus between the parts, mm from part 1's last vertex, or NaN. */
export const AREC_FOCUS = 6;

/** Most answers one shard returns (more: truncated). */
export const AFOCAL_SHARD_CAP = 200_000;

export interface AfocalSearchParams {
	expansion: number;
	expansionTolerance: number;
	inputBeamDiameterMm: number;
	maxLengthMm: number;
	/** 1: only with a focus between the parts; 0: only without; −1: both. */
	intermediateFocus: number;
	minGapMm: number;
	minClearance: number;
}

export interface AfocalShardInput {
	packed: Float64Array;
	partIndex: Int32Array;
	partUnits: Int32Array;
	candidates: Int32Array;
	params: AfocalSearchParams;
	shardIndex: number;
	shardCount: number;
	deadline: number;
	cancel?: Int32Array | null;
}

export interface AfocalShardResult {
	records: Float64Array;
	count: number;
	configurationsEvaluated: number;
	rootsFound: number;
	physicalRoots: number;
	truncated: boolean;
}

/** Runs one shard of mode afocal (see the module comment). */
export function afocalShard(input: AfocalShardInput): AfocalShardResult {
	const { packed, partIndex, partUnits, candidates, params: p } = input;
	const cancel = input.cancel ?? null;
	let data = new Float64Array(1024 * AREC_STRIDE);
	let count = 0,
		configs = 0,
		roots = 0,
		truncated = false;
	const n = candidates.length;
	const dIn = p.inputBeamDiameterMm;
	for (let m1 = input.shardIndex; m1 < n && !truncated; m1 += input.shardCount) {
		if (Date.now() > input.deadline || (cancel !== null && Atomics.load(cancel, 0) !== 0)) {
			truncated = true;
			break;
		}
		const i = candidates[m1];
		const o1 = i * ELEMENT_STRIDE;
		const a1 = packed[o1 + EL_A],
			b1 = packed[o1 + EL_B],
			c1 = packed[o1 + EL_C],
			d1 = packed[o1 + EL_D],
			t1 = packed[o1 + EL_THICKNESS],
			h1 = packed[o1 + EL_SEMI_APERTURE];
		// The input beam must fit the first part.
		if (h1 > 0 && 2 * h1 < p.minClearance * dIn) {
			configs += n;
			continue;
		}
		for (let m2 = 0; m2 < n; m2++) {
			configs++;
			const j = candidates[m2];
			if (partIndex[i] === partIndex[j] && partUnits[partIndex[i]] < 2) continue;
			const o2 = j * ELEMENT_STRIDE;
			const a2 = packed[o2 + EL_A],
				b2 = packed[o2 + EL_B],
				c2 = packed[o2 + EL_C],
				d2 = packed[o2 + EL_D],
				t2 = packed[o2 + EL_THICKNESS];
			const g = afocalGapMm(a1, b1, c1, d1, a2, b2, c2, d2);
			if (g === null) continue;
			roots++;
			const mid = a1 + g * c1; // ray height factor at part 2's first vertex
			const A = a2 * mid + b2 * c1;
			if (!(Math.abs(Math.abs(A) / p.expansion - 1) <= p.expansionTolerance)) continue;
			if (!(g >= p.minGapMm) || !(t1 + g + t2 <= p.maxLengthMm)) continue;
			const fa = focusAfterMm(a1, c1);
			const hasFocus = fa !== null && fa > 0 && fa < g;
			if (p.intermediateFocus === 1 && !hasFocus) continue;
			if (p.intermediateFocus === 0 && hasFocus) continue;
			// Only the gap and the glass between the parts: an expander has no object or target plane.
			if ((checkPairPhysical(packed, i, j, 1, g, 1, 0, p.minGapMm) & (PHYS_GAP | PHYS_SURFACES_TOUCH | PHYS_APERTURE)) !== 0) continue;
			const h2 = packed[o2 + EL_SEMI_APERTURE];
			let clearance = Infinity;
			if (h1 > 0) clearance = Math.min(clearance, (2 * h1) / dIn, (2 * h1) / (Math.abs(a1) * dIn));
			if (h2 > 0) clearance = Math.min(clearance, (2 * h2) / (Math.abs(mid) * dIn), (2 * h2) / (Math.abs(A) * dIn));
			if (!(clearance >= p.minClearance * (1 - 1e-12))) continue;
			if (count === AFOCAL_SHARD_CAP) {
				truncated = true;
				break;
			}
			if ((count + 1) * AREC_STRIDE > data.length) {
				const nb = new Float64Array(data.length * 2);
				nb.set(data);
				data = nb;
			}
			const o = count * AREC_STRIDE;
			data[o + AREC_I] = i;
			data[o + AREC_J] = j;
			data[o + AREC_GAP] = g;
			data[o + AREC_A] = A;
			data[o + AREC_LENGTH] = t1 + g + t2;
			data[o + AREC_CLEARANCE] = clearance;
			data[o + AREC_FOCUS] = hasFocus ? (fa as number) : NaN;
			count++;
		}
	}
	return { records: data, count, configurationsEvaluated: configs, rootsFound: roots, physicalRoots: count, truncated };
}
