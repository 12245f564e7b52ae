/**
 * The solver's worker thread: holds element snapshots (by key) and runs `searchShard` on
 * request. Loaded by pool.ts with `new Worker(selfUrl)`; on the main thread this module only
 * exports its own URL. Imports nothing from the framework or the database (relative imports
 * only), so its bundled chunk can run alone in a worker.
 */
import { isMainThread, parentPort, workerData } from 'node:worker_threads';
import { searchShard, snapshotArrays, type SearchParams, type SnapshotArrays } from '../../solver/search/search-kernel';
import { runModeShard, type ModeSearchMessage } from './mode-shard';
import { progressSlot } from '../../solver/search/progress';

/** URL of this module (in the built app: its own chunk). */
export const selfUrl = import.meta.url;

/** Marker in workerData that starts the loop. */
export const WORKER_MARK = 'glasscrib-solver-worker';

export type SnapshotMessage = { type: 'snapshot'; key: string } & SnapshotArrays;

export interface SearchMessage {
	type: 'search';
	taskId: number;
	key: string;
	candidates: Int32Array;
	partUnits: Int32Array;
	params: SearchParams;
	shardIndex: number;
	shardCount: number;
	topK: number;
	boundRange?: { min: number; max: number } | null;
	deadline: number;
	cancel: SharedArrayBuffer;
	progress?: SharedArrayBuffer | null;
}

export type WorkerReply =
	| {
			type: 'result';
			taskId: number;
			records: Float64Array;
			count: number;
			configurationsEvaluated: number;
			rootsFound: number;
			physicalRoots: number;
			truncated: boolean;
			ms: number;
	  }
	| { type: 'error'; taskId: number; message: string };

function startLoop(): void {
	const port = parentPort!;
	const snapshots = new Map<string, SnapshotMessage>();
	port.on('message', (msg: SnapshotMessage | SearchMessage | ModeSearchMessage) => {
		if (msg.type === 'snapshot') {
			snapshots.set(msg.key, msg);
			// Keep the few most recent snapshots (a stock change makes old ones useless).
			while (snapshots.size > 4) snapshots.delete(snapshots.keys().next().value as string);
			return;
		}
		const t0 = performance.now();
		try {
			const snap = snapshots.get(msg.key);
			if (!snap) throw new Error(`snapshot ${msg.key} is not loaded in this worker`);
			if (msg.type === 'mode-search') {
				// The beam modes (mode-shard.ts): same snapshot, same reply.
				const r = runModeShard(snap, msg);
				const reply: WorkerReply = { type: 'result', taskId: msg.taskId, ...r, ms: performance.now() - t0 };
				port.postMessage(reply, [r.records.buffer as ArrayBuffer]);
				return;
			}
			const r = searchShard({
				...snapshotArrays(snap),
				partUnits: msg.partUnits,
				candidates: msg.candidates,
				params: msg.params,
				shardIndex: msg.shardIndex,
				shardCount: msg.shardCount,
				topK: msg.topK,
				boundRange: msg.boundRange ?? null,
				deadline: msg.deadline,
				cancel: new Int32Array(msg.cancel),
				progress: progressSlot(msg.progress, msg.shardIndex)
			});
			const reply: WorkerReply = { type: 'result', taskId: msg.taskId, ...r, ms: performance.now() - t0 };
			port.postMessage(reply, [r.records.buffer as ArrayBuffer]);
		} catch (e) {
			port.postMessage({ type: 'error', taskId: msg.taskId, message: e instanceof Error ? e.message : String(e) } satisfies WorkerReply);
		}
	});
}

if (!isMainThread && (workerData as { mark?: string } | null)?.mark === WORKER_MARK) startLoop();
