/** Form plumbing shared by the stock-take pages (the upload and the drawer count). */
import { DomainError } from '$lib/server/errors';
import { failFrom } from '$lib/server/form-failure';
import type { CountLine } from './stock-take';

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
