/**
 * Who may do what: the one place that names roles. Every named role set, the table of stock
 * operations by role and the role labels live here; the guard (`requireRole(event, SET)`), the
 * navigation, the pages, the form actions, the API and the services read them from here. This
 * module imports nothing (no framework, no database), so the browser and scripts may use it too.
 */

/** The four roles of Glasscrib; one user has one role (the `users.role` column takes these). */
export const ROLES = ['admin', 'stockroom', 'engineer', 'purchaser'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
	admin: 'Administrator',
	stockroom: 'Stockroom',
	engineer: 'Engineer',
	purchaser: 'Purchaser'
};

/** Anyone, signed in or not (sign-in page, health). */
export const PUBLIC = 'public' as const;

/** Named role sets; every load, action and endpoint states one of these. */
export const ANY_ROLE: readonly Role[] = ROLES;
/** Administrators (their pages also need two-step sign-in: see the guard). */
export const ADMINS: readonly Role[] = ['admin'];
/** Write the catalogue and locations, receive, move, adjust, scrap, change conditions, import, count stock. */
export const STOCK_EDITORS: readonly Role[] = ['admin', 'stockroom'];
/** Issue and return: stockroom and engineers. */
export const STOCK_HANDLERS: readonly Role[] = ['admin', 'stockroom', 'engineer'];
export const SOLVER_USERS: readonly Role[] = ['admin', 'stockroom', 'engineer'];
/** Reserve parts (and release their own reservations). */
export const RESERVERS: readonly Role[] = ['admin', 'stockroom', 'engineer'];
/** Release anyone's reservation. */
export const RESERVATION_KEEPERS: readonly Role[] = STOCK_EDITORS;
/** The reorder board; create and step purchase requests. */
export const PURCHASERS: readonly Role[] = ['admin', 'purchaser'];
/** Get the digest of newly flagged parts by mail. */
export const DIGEST_RECIPIENTS: readonly Role[] = ['purchaser'];
/**
 * See purchase requests and receive goods against them: purchasers, and the stockroom (which takes
 * deliveries). Creating and stepping requests stays with PURCHASERS.
 */
export const REQUEST_VIEWERS: readonly Role[] = [...PURCHASERS, 'stockroom'];
/** PATCH a part: stock editors (any field) and purchasers (the purchasing fields only, see `PURCHASING_FIELDS_ONLY`). */
export const PART_PATCHERS: readonly Role[] = [...new Set([...STOCK_EDITORS, ...PURCHASERS])];
/** Roles that may change only a part's purchasing fields. */
export const PURCHASING_FIELDS_ONLY: readonly Role[] = PURCHASERS.filter((r) => !STOCK_EDITORS.includes(r));

/** The stock operations, in the order the part page offers them. */
export const STOCK_OPERATIONS = ['receive', 'move', 'issue', 'return', 'adjust', 'scrap', 'condition'] as const;
export type StockOperation = (typeof STOCK_OPERATIONS)[number];

/** Who may run each stock operation (the part page's forms, their actions and `POST /api/v1/stock/<operation>`). */
export const STOCK_OPERATION_ROLES: Readonly<Record<StockOperation, readonly Role[]>> = {
	receive: STOCK_EDITORS,
	move: STOCK_EDITORS,
	issue: STOCK_HANDLERS,
	return: STOCK_HANDLERS,
	adjust: STOCK_EDITORS,
	scrap: STOCK_EDITORS,
	condition: STOCK_EDITORS
};

/** The overview's sections each role sees (the numbers stay cheap: a few indexed queries per section). */
export const OVERVIEW_SECTIONS: Readonly<Record<Role, readonly ('purchasing' | 'stockroom' | 'setups')[]>> = {
	admin: ['purchasing', 'stockroom'],
	stockroom: ['stockroom'],
	engineer: ['setups'],
	purchaser: ['purchasing']
};

/** True when `role` is in `set` (false for no role). */
export const inSet = (role: Role | null | undefined, set: readonly Role[]): boolean => !!role && set.includes(role);

/** The stock operations `role` may run, in page order. */
export const stockOperationsFor = (role: Role | null | undefined): StockOperation[] => STOCK_OPERATIONS.filter((op) => inSet(role, STOCK_OPERATION_ROLES[op]));

/** A set only administrators are in (the guard then asks for two-step sign-in too). */
export const isAdminOnly = (set: readonly Role[]): boolean => set.length > 0 && set.every((r) => ADMINS.includes(r));
