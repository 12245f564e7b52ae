/** Form plumbing shared by the stock-take pages (the upload and the drawer count). */
import { DomainError } from '$lib/server/errors';
import { failFrom } from '$lib/server/form-failure';
import type { DbOrTx } from '$lib/server/db';
import { stockTake, type CountLine } from './stock-take';

/** The lines a dry run showed, posted back as JSON in the field `lines`. */
export function linesFromForm(form: FormData): CountLine[] {
	try {
		const v = JSON.parse(String(form.get('lines') ?? ''));
		if (Array.isArray(v)) return v as CountLine[];
	} catch {
		/* fall through */
	}
	throw new DomainError(400, 'no-lines', 'Nothing to write: check the count first.', { file: 'Check the count first.' });
}

/** A refused count as the page shows it: the message, and every refused line in `rows` (`StockTakeRefused.lines`). */
export function countFailure(err: unknown, values: Record<string, string> = {}) {
	return failFrom(err, { values });
}

/** The confirm step of both stock-take pages: the dry run's lines posted back, checked and written. */
export async function commitCount(db: DbOrTx, form: FormData, actorId: number) {
	try {
		const lines = linesFromForm(form);
		return { result: await stockTake(db, lines, { dryRun: false, actor: { id: actorId } }), lines };
	} catch (err) {
		return countFailure(err);
	}
}
