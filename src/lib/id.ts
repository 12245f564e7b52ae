/**
 * A record id written as text (a URL segment, a query value, a form field): a canonical positive
 * integer ("1", "42"), nothing else. " 1", "01", "0", "0x10", "1e3", "1.0" and "-1" are not ids.
 * The route matcher `src/params/id.ts` and every check of an id in a query or form use this one rule.
 */
export function isId(text: string | null | undefined): text is `${number}` {
	return typeof text === 'string' && /^[1-9][0-9]{0,15}$/.test(text) && Number.isSafeInteger(Number(text));
}

/** The id in `text`, or null when it is not one. */
export function idOf(text: string | null | undefined): number | null {
	return isId(text) ? Number(text) : null;
}
