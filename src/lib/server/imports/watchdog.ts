/**
 * The import watchdog: a run whose process or database connection went away must not stay
 * "checking"/"committing" with counts that describe nothing. Runs at start (`init` in
 * hooks.server.ts) and every WATCH_EVERY_MS:
 *   1. outcomes a run in this process could not write (the database was away) are written now;
 *   2. a run silent for STALE_AFTER_MS (heartbeat after every batch) and not running in this
 *      process is settled: committed when its commit's audit event exists (it is written in the
 *      commit's own transaction, so it exists exactly when the rows do), else failed with a message
 *      and no created/updated/unchanged rows claimed.
 * The update is conditional on the record still being stale, so a run that speaks again wins.
 */
import { and, eq, inArray, isNull, lt, or } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { auditEvents, imports } from '$lib/server/db/schema';
import { activeRuns, pendingOutcomes, STALE_AFTER_MS, writeOutcome } from './run';

export const WATCH_EVERY_MS = 15_000;

export const INTERRUPTED_MESSAGE =
	'The import stopped without finishing: the app restarted or lost its connection to the database. Nothing of it was written to the catalogue; run it again.';

/** One pass of the watchdog (see the module note). Returns what it settled. */
export async function sweepImports(db: Db, now = Date.now()) {
	let written = 0;
	for (const [id, outcome] of [...pendingOutcomes]) {
		try {
			await writeOutcome(db, id, outcome);
			pendingOutcomes.delete(id);
			written++;
		} catch {
			// still away: next pass
		}
	}
	const staleBefore = new Date(now - STALE_AFTER_MS);
	const stale = (await db
		.select({ id: imports.id, status: imports.status })
		.from(imports)
		.where(and(inArray(imports.status, ['checking', 'committing']), or(isNull(imports.heartbeatAt), lt(imports.heartbeatAt, staleBefore))))).filter((r) => !activeRuns.has(r.id) && !pendingOutcomes.has(r.id));
	let failed = 0;
	let committed = 0;
	for (const r of stale) {
		const [done] = r.status === 'committing' ? await db.select({ detail: auditEvents.detail, at: auditEvents.at }).from(auditEvents).where(and(eq(auditEvents.action, 'import.commit'), eq(auditEvents.targetId, String(r.id)))).limit(1) : [];
		const stillStale = and(eq(imports.id, r.id), eq(imports.status, r.status), or(isNull(imports.heartbeatAt), lt(imports.heartbeatAt, staleBefore)));
		if (done) {
			const d = (done.detail ?? {}) as { created?: number; updated?: number; unchanged?: number; rejected?: number };
			await db
				.update(imports)
				.set({ status: 'committed', message: null, committedAt: done.at, created: d.created ?? 0, updated: d.updated ?? 0, unchanged: d.unchanged ?? 0, heartbeatAt: new Date(now) })
				.where(stillStale);
			committed++;
		} else {
			await db
				.update(imports)
				.set({
					status: 'failed',
					message: r.status === 'committing' ? INTERRUPTED_MESSAGE : 'The dry run stopped without finishing (the app restarted or lost its connection to the database); run it again.',
					...(r.status === 'committing' ? { created: 0, updated: 0, unchanged: 0 } : {}),
					heartbeatAt: new Date(now)
				})
				.where(stillStale);
			failed++;
		}
	}
	return { written, failed, committed };
}

let timer: ReturnType<typeof setInterval> | null = null;

/** Starts the watchdog once per process: a pass now, then one every WATCH_EVERY_MS (never keeps the process alive). */
export function startImportWatchdog(db: Db) {
	if (timer) return;
	const pass = () => sweepImports(db).catch((err) => console.warn('[imports] watchdog pass failed:', err instanceof Error ? err.message : err));
	void pass();
	timer = setInterval(pass, WATCH_EVERY_MS);
	timer.unref();
}
