import { DomainError } from '$lib/server/errors';
import type { Role } from '$lib/server/db/schema';
import { PURCHASERS, STOCK_EDITORS } from '$lib/server/auth/roles';
import { isId } from '$lib/id';

/** A route's numeric id parameter; anything else is 404 (there is no such record). */
export function idParam(value: string | undefined, what = 'record'): number {
	if (!isId(value)) throw new DomainError(404, 'not-found', `There is no ${what} ${value ?? ''}.`.trim());
	return Number(value);
}

/** Who may PATCH a part: stock editors (any field) and purchasers (purchasing fields only, see parts.assertPatchAllowed). */
export const PART_PATCHERS: readonly Role[] = [...new Set([...STOCK_EDITORS, ...PURCHASERS])];
