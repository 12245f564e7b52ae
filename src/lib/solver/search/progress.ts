/**
 * A search's progress, shared by its shards and the request thread without messages: one SharedArrayBuffer with
 * PROGRESS_STRIDE numbers per shard, [fraction searched, best element i, best element j (−1 for one part), best score]
 * (lower score is better; NaN while the shard has no answer). The kernels write their own slot as they go; the
 * request thread reads every slot a few times a second and streams what it reads (see solve.ts, beam-solve.ts).
 * The fraction is the share of the shard's rows done (imaging); in mode beam the sweep counts for the first half and
 * the solving of the pairs it kept for the second (a branch and bound cannot say in advance how much it will skip).
 * Relative imports only: the kernels run in the worker's own chunk.
 */
export const PROGRESS_STRIDE = 4;
export const PG_FRACTION = 0;
export const PG_BEST_I = 1;
export const PG_BEST_J = 2;
export const PG_BEST_SCORE = 3;

/** A fresh buffer for `shards` shards: nothing searched, no answer yet. */
export function progressBuffer(shards: number): SharedArrayBuffer {
	const sab = new SharedArrayBuffer(Math.max(1, shards) * PROGRESS_STRIDE * 8);
	const all = new Float64Array(sab);
	for (let s = 0; s < shards; s++) {
		all[s * PROGRESS_STRIDE + PG_FRACTION] = 0;
		all[s * PROGRESS_STRIDE + PG_BEST_I] = -1;
		all[s * PROGRESS_STRIDE + PG_BEST_J] = -1;
		all[s * PROGRESS_STRIDE + PG_BEST_SCORE] = NaN;
	}
	return sab;
}

/** Shard `index`'s slot of `sab` (null when there is no buffer or it has no slot for the shard). */
export function progressSlot(sab: SharedArrayBuffer | null | undefined, index: number): Float64Array | null {
	if (!sab || (index + 1) * PROGRESS_STRIDE * 8 > sab.byteLength) return null;
	return new Float64Array(sab, index * PROGRESS_STRIDE * 8, PROGRESS_STRIDE);
}

/** Records a candidate in a slot when it beats the slot's best (lower score). */
export function offerBest(slot: Float64Array | null, i: number, j: number, score: number): void {
	if (!slot || !(score < slot[PG_BEST_SCORE] || Number.isNaN(slot[PG_BEST_SCORE]))) return;
	slot[PG_BEST_I] = i;
	slot[PG_BEST_J] = j;
	slot[PG_BEST_SCORE] = score;
}

/** The search as a whole: the mean fraction over the shards and the best answer any shard holds. */
export function readProgress(sab: SharedArrayBuffer, shards: number): { fraction: number; best: { i: number; j: number; score: number } | null } {
	const all = new Float64Array(sab);
	let fraction = 0;
	let best: { i: number; j: number; score: number } | null = null;
	for (let s = 0; s < shards; s++) {
		const o = s * PROGRESS_STRIDE;
		fraction += Math.min(1, Math.max(0, all[o + PG_FRACTION])) / shards;
		const score = all[o + PG_BEST_SCORE];
		if (!Number.isNaN(score) && all[o + PG_BEST_I] >= 0 && (!best || score < best.score)) best = { i: all[o + PG_BEST_I], j: all[o + PG_BEST_J], score };
	}
	return { fraction, best };
}
