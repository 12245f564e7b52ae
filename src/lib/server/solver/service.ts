/**
 * The solve service the routes call (every mode: imaging, beam, afocal): validate, admit (a light concurrency cap), load the
 * stock view (cached by stock version), search on the pool with the request's abort signal.
 *
 * Rate limit: per instance, at most MAX_PER_USER solves of one user and MAX_ACTIVE solves
 * in all at the same time; beyond that 429. Kept in memory on purpose: it protects this
 * instance's two cores, which is a per-instance resource (a lab-wide quota would live in
 * MariaDB).
 */
import type { DbOrTx } from '$lib/server/db';
import { DomainError } from '$lib/server/errors';
import { solveRequestSchema, type ParsedSolveRequest } from '$lib/solver/request';
import type { AnySolveResponse, SolveProgress } from '$lib/solver/types';
import { stockView } from './load-stock';
import { solveWithStock } from './solve';
import { solveBeamWithStock, solveAfocalWithStock } from './beam-solve';

export const MAX_PER_USER = 2;
export const MAX_ACTIVE = 6;

const active = new Map<number, number>();
let total = 0;

/**
 * Admits one more solve of `user` (429 beyond the caps) and returns the function that releases it. `solve` admits by
 * itself; the streaming route admits before it starts its answer, so that a refusal is a plain 429.
 */
export function admit(user: { id: number }): () => void {
	const mine = active.get(user.id) ?? 0;
	if (mine >= MAX_PER_USER || total >= MAX_ACTIVE) {
		throw new DomainError(429, 'too-many-requests', 'The solver is busy with your earlier questions; try again in a moment.');
	}
	active.set(user.id, mine + 1);
	total++;
	let released = false;
	return () => {
		if (released) return;
		released = true;
		total--;
		const n = (active.get(user.id) ?? 1) - 1;
		if (n <= 0) active.delete(user.id);
		else active.set(user.id, n);
	};
}

/** Solves an already validated request (the caller has admitted it). */
export async function solveParsed(
	db: DbOrTx,
	req: ParsedSolveRequest,
	options: { signal?: AbortSignal; onProgress?: (p: SolveProgress) => void; onProvisional?: (r: AnySolveResponse) => void } = {}
): Promise<AnySolveResponse> {
	const stock = await stockView(db);
	if (req.mode === 'beam') return solveBeamWithStock(stock, req, options);
	if (req.mode === 'afocal') return solveAfocalWithStock(stock, req, options);
	return solveWithStock(stock, req, options);
}

/** Validates `body` and solves it for `user`; aborting `signal` cancels the search. */
export async function solve(db: DbOrTx, body: unknown, user: { id: number }, signal?: AbortSignal): Promise<AnySolveResponse> {
	const req = solveRequestSchema.parse(body);
	const release = admit(user);
	try {
		return await solveParsed(db, req, { signal });
	} finally {
		release();
	}
}
