import { DomainError } from '$lib/server/errors';
import { isId } from '$lib/id';

/** A route's numeric id parameter; anything else is 404 (there is no such record). */
export function idParam(value: string | undefined, what = 'record'): number {
	if (!isId(value)) throw new DomainError(404, 'not-found', `There is no ${what} ${value ?? ''}.`.trim());
	return Number(value);
}
