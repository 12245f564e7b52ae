import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson, toErrorResponse } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { SOLVER_USERS } from '$lib/roles';
import { solveRequestSchema } from '$lib/solver/request';
import * as solver from '$lib/server/solver/service';

const NDJSON = 'application/x-ndjson';

/**
 * Build from stock: the question → ranked, traced solutions and stats (see DESIGN.md "The solver").
 * With `Accept: application/x-ndjson` the answer is a stream of JSON lines: `{"type":"progress","fraction",
 * "stage","best"}` a few times a second while the search runs, for imaging a `{"type":"provisional","result"}`
 * (the screening pass's answers) when proving them best takes a while, then one `{"type":"result","result"}` (the plain answer)
 * or `{"type":"error","status","error"}`. Bad input and a busy solver are refused before the stream starts (plain
 * 400 / 429). Closing the connection cancels the search.
 */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, SOLVER_USERS);
	const body = await readJson(event.request);
	if (!(event.request.headers.get('accept') ?? '').includes(NDJSON)) return json(await solver.solve(db, body, { id: user.id }, event.request.signal));

	const req = solveRequestSchema.parse(body);
	const release = solver.admit({ id: user.id });
	const abort = new AbortController();
	const onAbort = () => abort.abort();
	event.request.signal.addEventListener('abort', onAbort, { once: true });
	const encoder = new TextEncoder();
	const stream = new ReadableStream<Uint8Array>({
		async start(controller) {
			const send = (line: unknown) => {
				if (abort.signal.aborted) return;
				try {
					controller.enqueue(encoder.encode(`${JSON.stringify(line)}\n`));
				} catch {
					/* the client has gone */
				}
			};
			try {
				const result = await solver.solveParsed(db, req, {
					signal: abort.signal,
					onProgress: (p) => send({ type: 'progress', ...p }),
					onProvisional: (r) => send({ type: 'provisional', result: r })
				});
				send({ type: 'result', result });
			} catch (err) {
				let res: Response;
				try {
					res = toErrorResponse(err);
				} catch {
					console.error('[solve] the streamed search failed:', err);
					res = json({ error: { code: 'error', message: 'Something went wrong on the server.' } }, { status: 500 });
				}
				send({ type: 'error', status: res.status, ...(await res.json()) });
			} finally {
				release();
				event.request.signal.removeEventListener('abort', onAbort);
				try {
					controller.close();
				} catch {
					/* already closed */
				}
			}
		},
		cancel() {
			abort.abort();
		}
	});
	return new Response(stream, { headers: { 'content-type': `${NDJSON}; charset=utf-8`, 'cache-control': 'no-store' } });
}) satisfies RequestHandler;
