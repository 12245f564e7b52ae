/**
 * The worker pool of the solver: one worker_thread per core (at most 2 here), each searching
 * one shard of the pairs, so a solve never blocks the request thread. Snapshots are sent to a
 * worker once per key; a search carries a shared cancel flag and a deadline.
 *
 * Worker entry: search-worker.ts is imported dynamically, so the build emits it as its own
 * chunk, and the worker loads that chunk by its URL. Under vitest, tsx or `vite dev` the URL
 * is a .ts file: it is then bundled once with esbuild (a dependency of tsx) into a temporary
 * .mjs, so workers run the same optimised code as in production.
 */
import { Worker } from 'node:worker_threads';
import { workerFileOf } from '$lib/server/worker-file';
import os from 'node:os';
import { snapshotArrays, type SearchParams, type SnapshotArrays } from '../../solver/search/search-kernel';
import type { SearchMessage, SnapshotMessage, WorkerReply } from './search-worker';
import type { ModeSearchMessage } from './mode-shard';
import type { BeamSearchParams } from './beam-kernel';
import type { AfocalSearchParams } from './afocal-kernel';

/** What the pool needs of a snapshot: its key and its arrays. */
export type PoolSnapshot = SnapshotArrays & { key: string };

export interface PoolSearch {
	candidates: Int32Array;
	partUnits: Int32Array;
	params: SearchParams;
	topK: number;
	/** Keep only roots whose rank bound lies in this window (the second pass). */
	boundRange?: { min: number; max: number } | null;
	deadline: number;
	signal?: AbortSignal;
	/** A progress buffer (progress.ts) with a slot per worker: the shards write their progress into it. */
	progress?: SharedArrayBuffer | null;
}

export type ShardReply = Extract<WorkerReply, { type: 'result' }>;

interface Slot {
	worker: Worker;
	keys: Set<string>;
	pending: Map<number, { resolve: (r: ShardReply) => void; reject: (e: Error) => void }>;
}

let slots: Promise<Slot[]> | null = null;
let nextTask = 1;

/** Number of workers: one per core, at least 1, at most 4. */
export function workerCount(): number {
	const n = typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length;
	return Math.max(1, Math.min(4, n));
}

async function workerFile(): Promise<URL> {
	const mod = await import('./search-worker');
	return workerFileOf(mod.selfUrl, 'solver-worker');
}

async function startWorkers(): Promise<Slot[]> {
	const [file, { WORKER_MARK }] = await Promise.all([workerFile(), import('./search-worker')]);
	return Array.from({ length: workerCount() }, () => {
		const worker = new Worker(file, { workerData: { mark: WORKER_MARK } });
		worker.unref();
		const slot: Slot = { worker, keys: new Set(), pending: new Map() };
		worker.on('message', (msg: WorkerReply) => {
			const p = slot.pending.get(msg.taskId);
			if (!p) return;
			slot.pending.delete(msg.taskId);
			if (msg.type === 'result') p.resolve(msg);
			else p.reject(new Error(msg.message));
		});
		worker.on('error', (err) => {
			for (const p of slot.pending.values()) p.reject(err);
			slot.pending.clear();
			slots = null; // start fresh workers on the next solve
		});
		return slot;
	});
}

function pool(): Promise<Slot[]> {
	if (!slots) {
		slots = startWorkers();
		slots.catch(() => (slots = null));
	}
	return slots;
}

/** Sends the snapshot's arrays to a worker that does not hold them yet (it keeps the last four keys). */
function sendSnapshot(slot: Slot, snapshot: PoolSnapshot): void {
	if (slot.keys.has(snapshot.key)) return;
	const msg: SnapshotMessage = { type: 'snapshot', key: snapshot.key, ...snapshotArrays(snapshot) };
	slot.worker.postMessage(msg);
	slot.keys.add(snapshot.key);
	if (slot.keys.size > 4) slot.keys.delete(slot.keys.values().next().value as string);
}

/** Starts the workers ahead of the first solve (optional). */
export async function warmUp(): Promise<number> {
	return (await pool()).length;
}

/**
 * Searches every shard of `search` on the workers (one shard per worker) and resolves with
 * the shard replies. Aborting `signal` sets the shared cancel flag: the workers stop at the
 * next row and reply with what they have (truncated).
 */
export async function searchOnPool(snapshot: PoolSnapshot, search: PoolSearch): Promise<ShardReply[]> {
	const list = await pool();
	const cancelBuffer = new SharedArrayBuffer(4);
	const cancel = new Int32Array(cancelBuffer);
	const onAbort = () => Atomics.store(cancel, 0, 1);
	if (search.signal?.aborted) onAbort();
	search.signal?.addEventListener('abort', onAbort, { once: true });
	try {
		return await Promise.all(
			list.map((slot, shardIndex) => {
				sendSnapshot(slot, snapshot);
				const taskId = nextTask++;
				const msg: SearchMessage = {
					type: 'search',
					taskId,
					key: snapshot.key,
					candidates: search.candidates,
					partUnits: search.partUnits,
					params: search.params,
					shardIndex,
					shardCount: list.length,
					topK: search.topK,
					boundRange: search.boundRange ?? null,
					deadline: search.deadline,
					cancel: cancelBuffer,
					progress: search.progress ?? null
				};
				return new Promise<ShardReply>((resolve, reject) => {
					slot.pending.set(taskId, { resolve, reject });
					slot.worker.postMessage(msg);
				});
			})
		);
	} finally {
		search.signal?.removeEventListener('abort', onAbort);
	}
}

/** A beam-mode search (mode-shard.ts): the mode, its kernel's parameters and the shared fields. */
export type PoolModeSearch = Omit<PoolSearch, 'params'> & ({ mode: 'beam'; params: BeamSearchParams } | { mode: 'afocal'; params: AfocalSearchParams });

/**
 * Runs a beam-mode search on the workers, one shard per worker, over the same snapshot cache as
 * the imaging search; cancel and deadline work the same way.
 */
export async function searchModeOnPool(snapshot: PoolSnapshot, search: PoolModeSearch): Promise<ShardReply[]> {
	const list = await pool();
	// The cancel flag (Int32 at byte 0) and the shards' best K-th rank key (BigInt64 at byte 8, see beam-kernel.ts).
	const cancelBuffer = new SharedArrayBuffer(16);
	const cancel = new Int32Array(cancelBuffer);
	const onAbort = () => Atomics.store(cancel, 0, 1);
	if (search.signal?.aborted) onAbort();
	search.signal?.addEventListener('abort', onAbort, { once: true });
	try {
		return await Promise.all(
			list.map((slot, shardIndex) => {
				sendSnapshot(slot, snapshot);
				const taskId = nextTask++;
				const common = {
					type: 'mode-search' as const,
					taskId,
					key: snapshot.key,
					candidates: search.candidates,
					partUnits: search.partUnits,
					shardIndex,
					shardCount: list.length,
					topK: search.topK,
					deadline: search.deadline,
					cancel: cancelBuffer,
					progress: search.progress ?? null
				};
				const msg: ModeSearchMessage = search.mode === 'beam' ? { ...common, mode: 'beam', params: search.params } : { ...common, mode: 'afocal', params: search.params };
				return new Promise<ShardReply>((resolve, reject) => {
					slot.pending.set(taskId, { resolve, reject });
					slot.worker.postMessage(msg);
				});
			})
		);
	} finally {
		search.signal?.removeEventListener('abort', onAbort);
	}
}
