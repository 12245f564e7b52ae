import type { Role } from '$lib/server/db/schema';

/** Named role sets; every load, action and endpoint states one of these. */
export const ANY_ROLE: readonly Role[] = ['admin', 'stockroom', 'engineer', 'purchaser'];
export const ADMINS: readonly Role[] = ['admin'];
export const STOCK_EDITORS: readonly Role[] = ['admin', 'stockroom'];
/** Issue and return: stockroom and engineers. */
export const STOCK_HANDLERS: readonly Role[] = ['admin', 'stockroom', 'engineer'];
export const SOLVER_USERS: readonly Role[] = ['admin', 'stockroom', 'engineer'];
export const RESERVERS: readonly Role[] = ['admin', 'stockroom', 'engineer'];
export const PURCHASERS: readonly Role[] = ['admin', 'purchaser'];
/** Anyone, signed in or not (sign-in page, health). */
export const PUBLIC = 'public' as const;

export const ROLE_LABELS: Record<Role, string> = {
	admin: 'Administrator',
	stockroom: 'Stockroom',
	engineer: 'Engineer',
	purchaser: 'Purchaser'
};
