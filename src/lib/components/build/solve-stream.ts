/**
 * The /build page's call of the solver: `POST /api/v1/solve` asking for the streamed answer
 * (JSON lines: progress while the search runs, for imaging the screening pass's answers while they are proven
 * best, then the result or the error). An answer that
 * is not streamed (plain JSON) is read as well. No DOM or framework imports.
 */
import type { AnySolveResponse, SolveProgress } from '$lib/solver/types';

/** A refusal of the solver: the status and its error body. */
export type Refusal = { status: number; error?: { message?: string; fields?: Record<string, string> } };
/** What the solver answered. */
export type Answer = { ok: true; result: AnySolveResponse } | ({ ok: false } & Refusal);

/** Reads the streamed answer, telling each progress line to `onProgress` and a provisional answer to `onProvisional`. */
export async function readSolveStream(res: Response, onProgress: (p: SolveProgress) => void, onProvisional: (r: AnySolveResponse) => void = () => {}): Promise<Answer> {
	const reader = res.body!.pipeThrough(new TextDecoderStream()).getReader();
	let pending = '';
	for (;;) {
		const { value, done } = await reader.read();
		if (done) break;
		pending += value;
		let nl: number;
		while ((nl = pending.indexOf('\n')) >= 0) {
			const line = JSON.parse(pending.slice(0, nl));
			pending = pending.slice(nl + 1);
			if (line.type === 'progress') onProgress({ fraction: line.fraction, best: line.best, ...(line.stage ? { stage: line.stage } : {}) });
			else if (line.type === 'provisional') onProvisional(line.result);
			else if (line.type === 'result') return { ok: true, result: line.result };
			else if (line.type === 'error') return { ok: false, status: line.status, error: line.error };
		}
	}
	return { ok: false, status: 0, error: { message: 'The answer ended early. Try again.' } };
}

/** Asks the solver the question `body` (the request as JSON); aborting `signal` cancels the search on the server too. */
export async function askSolver(body: string, signal: AbortSignal, onProgress: (p: SolveProgress) => void, onProvisional?: (r: AnySolveResponse) => void): Promise<Answer> {
	const res = await fetch('/api/v1/solve', { method: 'POST', headers: { 'content-type': 'application/json', accept: 'application/x-ndjson' }, body, signal });
	const streamed = res.ok && (res.headers.get('content-type') ?? '').startsWith('application/x-ndjson');
	if (streamed) return readSolveStream(res, onProgress, onProvisional);
	return res.ok ? { ok: true, result: await res.json() } : { ok: false, status: res.status, ...(await res.json()) };
}
