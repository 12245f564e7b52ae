/**
 * The beam modes' shard search as the worker runs it: one message type for both modes (`beam`,
 * `afocal`), dispatched to their kernels over the same element snapshot the imaging search uses.
 * Relative imports only (the worker's chunk runs alone).
 */
import { beamShard, type BeamSearchParams } from './beam-kernel';
import { afocalShard, type AfocalSearchParams } from './afocal-kernel';
import { progressSlot } from '../../solver/search/progress';

export type ModeSearchMessage = {
	type: 'mode-search';
	taskId: number;
	key: string;
	candidates: Int32Array;
	partUnits: Int32Array;
	shardIndex: number;
	shardCount: number;
	topK: number;
	deadline: number;
	cancel: SharedArrayBuffer;
	progress?: SharedArrayBuffer | null;
} & ({ mode: 'beam'; params: BeamSearchParams } | { mode: 'afocal'; params: AfocalSearchParams });

/** A shard task of either mode (the message without its envelope). */
export type ModeShardTask = {
	candidates: Int32Array;
	partUnits: Int32Array;
	shardIndex: number;
	shardCount: number;
	topK: number;
	deadline: number;
	cancel?: SharedArrayBuffer | null;
	/** The search's progress buffer (progress.ts); the shard writes its own slot. */
	progress?: SharedArrayBuffer | null;
} & ({ mode: 'beam'; params: BeamSearchParams } | { mode: 'afocal'; params: AfocalSearchParams });

/** What a shard of either mode returns (the imaging shard's shape). */
export interface ModeShardResult {
	records: Float64Array;
	count: number;
	configurationsEvaluated: number;
	rootsFound: number;
	physicalRoots: number;
	truncated: boolean;
}

/** Runs one shard of a beam-mode search on `snap` (packed elements and part index). */
export function runModeShard(
	snap: { packed: Float64Array; partIndex: Int32Array },
	msg: ModeShardTask
): ModeShardResult {
	const common = {
		packed: snap.packed,
		partIndex: snap.partIndex,
		partUnits: msg.partUnits,
		candidates: msg.candidates,
		shardIndex: msg.shardIndex,
		shardCount: msg.shardCount,
		deadline: msg.deadline,
		cancel: msg.cancel ? new Int32Array(msg.cancel) : null
	};
	// The search's shared buffer: the cancel flag at byte 0, the best K-th rank key published at byte 8.
	const sharedKth = msg.cancel && msg.cancel.byteLength >= 16 ? new BigInt64Array(msg.cancel, 8, 1) : null;
	const progress = progressSlot(msg.progress, msg.shardIndex);
	if (msg.mode === 'beam') return beamShard({ ...common, params: msg.params, topK: msg.topK, sharedKth, progress });
	return afocalShard({ ...common, params: msg.params });
}
