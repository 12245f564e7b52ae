/** Form plumbing shared by the stock-take pages (the upload and the drawer count). */
import { fail } from '@sveltejs/kit';
import { ApiError, DomainError } from '$lib/server/api/http';
import { StockTakeRefused, type CountLine } from './stock-take';

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

/** A refused count as the page shows it (every refused line), or null for other errors. */
export function countFailure(err: unknown) {
	if (err instanceof StockTakeRefused) return fail(400, { errors: { file: err.message }, refused: err.lines });
	if (err instanceof DomainError || err instanceof ApiError) return fail(err.status, { errors: { file: err.message } });
	throw err;
}
