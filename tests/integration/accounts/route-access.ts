/**
 * Who may use which route: the table the role matrix test (role-matrix.test.ts) walks.
 *
 * One entry per route id (the folder under src/routes, e.g. '/parts/[id=id]'), with the access of
 * each thing the route exports: the page load as GET, each form action under `actions` (the unnamed
 * one is 'default'), and each HTTP method of a +server.ts. Access is `PUBLIC` or one of the named
 * role sets from src/lib/roles.ts. The test fails when a route exists that the table
 * does not list (or the table lists one that no longer exists), so add your route here with it.
 *
 * - A route with a dynamic param needs `url`, a sample address. The walk really sends the requests
 *   (writes with an empty body `{}` or an empty form), so for a route that changes things use an id
 *   that does not exist (e.g. /api/v1/parts/99999999): allowed roles then get 404 or 400, which
 *   count as allowed; only 401/403 count as denied.
 * - `endsSession: true` for a request that signs the caller out; the walk uses a throwaway session.
 * - ADMINS-only entries also need two-step sign-in (the guard's rule): the walk checks that the demo
 *   admin, who has not set it up, gets 403 there. A half-signed-in session reaches only the routes in
 *   role-matrix.test.ts's HALF_SIGNED_IN list.
 */
import type { Role } from '../../../src/lib/server/db/schema';
import { ADMINS, ANY_ROLE, PUBLIC, PURCHASERS, RESERVERS, SOLVER_USERS, STOCK_EDITORS, STOCK_HANDLERS } from '../../../src/lib/roles';

export type Access = typeof PUBLIC | readonly Role[];
export type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';

export type RouteAccess = Partial<Record<Method, Access>> & {
	url?: string;
	actions?: Record<string, Access>;
	endsSession?: boolean;
};

const PART_PATCHERS: readonly Role[] = [...new Set([...STOCK_EDITORS, ...PURCHASERS])];
const REQUEST_VIEWERS: readonly Role[] = [...PURCHASERS, 'stockroom'];

export const ROUTE_ACCESS: Record<string, RouteAccess> = {
	// ── foundation ──
	'/': { GET: ANY_ROLE },
	'/health': { GET: PUBLIC },
	'/api/v1/openapi.json': { GET: PUBLIC },

	// ── accounts ──
	'/signin': { GET: PUBLIC, actions: { default: PUBLIC } },
	'/signin/code': { GET: ANY_ROLE, actions: { default: ANY_ROLE } },
	'/signin/forgot': { GET: PUBLIC, actions: { default: PUBLIC } },
	'/signout': { GET: ANY_ROLE, actions: { default: ANY_ROLE }, endsSession: true },
	'/welcome/[token]': { url: '/welcome/no-such-link-0000000000000000000000', GET: PUBLIC, actions: { default: PUBLIC } },
	'/account': {
		GET: ANY_ROLE,
		actions: {
			password: ANY_ROLE,
			createToken: ANY_ROLE,
			revokeToken: ANY_ROLE,
			endSession: ANY_ROLE,
			endOtherSessions: ANY_ROLE,
			startTwoStep: ANY_ROLE,
			cancelTwoStep: ANY_ROLE,
			confirmTwoStep: ANY_ROLE,
			turnOffTwoStep: ANY_ROLE
		}
	},
	'/admin/users': { GET: ADMINS, actions: { invite: ADMINS, role: ADMINS, deactivate: ADMINS, reactivate: ADMINS, resend: ADMINS, clearTwoStep: ADMINS } },
	'/admin/outbox': { GET: ADMINS },
	'/admin/settings': { GET: ADMINS, actions: { wavelength: ADMINS } },
	'/admin/materials': { GET: ADMINS, actions: { create: ADMINS } },
	'/admin/outbox/[id=id]': { url: '/admin/outbox/99999999', GET: ADMINS },
	'/api/v1/session': { POST: PUBLIC, DELETE: ANY_ROLE, endsSession: true },
	'/api/v1/session/second-factor': { POST: ANY_ROLE },
	'/api/v1/me': { GET: ANY_ROLE },
	'/api/v1/tokens': { GET: ANY_ROLE, POST: ANY_ROLE },
	'/api/v1/tokens/[id=id]': { url: '/api/v1/tokens/99999999', DELETE: ANY_ROLE },
	'/api/v1/outbox': { GET: ADMINS },

	// ── catalogue ──
	'/api/v1/parts': { GET: ANY_ROLE, POST: STOCK_EDITORS },
	'/api/v1/parts/[id=id]': { url: '/api/v1/parts/99999999', GET: ANY_ROLE, PATCH: PART_PATCHERS, DELETE: STOCK_EDITORS },
	'/api/v1/parts/[id=id]/measurements': { url: '/api/v1/parts/99999999/measurements', GET: ANY_ROLE, POST: STOCK_EDITORS },
	'/api/v1/parts/[id=id]/movements': { url: '/api/v1/parts/99999999/movements', GET: ANY_ROLE },

	'/parts': { GET: ANY_ROLE },
	'/parts/new': { GET: STOCK_EDITORS, actions: { default: STOCK_EDITORS } },
	'/parts/[id=id]/edit': { url: '/parts/99999999/edit', GET: STOCK_EDITORS, actions: { default: STOCK_EDITORS } },
	'/parts/[id=id]': {
		url: '/parts/99999999',
		GET: ANY_ROLE,
		actions: {
			receive: STOCK_EDITORS,
			move: STOCK_EDITORS,
			issue: STOCK_HANDLERS,
			return: STOCK_HANDLERS,
			adjust: STOCK_EDITORS,
			scrap: STOCK_EDITORS,
			condition: STOCK_EDITORS,
			measure: STOCK_EDITORS,
			reserve: RESERVERS,
			release: RESERVERS,
			archive: STOCK_EDITORS,
			restore: STOCK_EDITORS
		}
	},

	// ── stock ──
	'/stock': { GET: ANY_ROLE },
	'/locations': { GET: ANY_ROLE, actions: { create: STOCK_EDITORS, rename: STOCK_EDITORS, archive: STOCK_EDITORS } },
	'/api/v1/locations': { GET: ANY_ROLE, POST: STOCK_EDITORS },
	'/api/v1/materials': { GET: ANY_ROLE, POST: ADMINS },
	'/api/v1/locations/[id=id]': { url: '/api/v1/locations/99999999', GET: ANY_ROLE, PATCH: STOCK_EDITORS },
	'/api/v1/stock': { GET: ANY_ROLE },
	'/api/v1/stock/export.csv': { GET: ANY_ROLE },
	'/api/v1/stock/receive': { POST: STOCK_EDITORS },
	'/api/v1/stock/move': { POST: STOCK_EDITORS },
	'/api/v1/stock/adjust': { POST: STOCK_EDITORS },
	'/api/v1/stock-takes': { POST: STOCK_EDITORS },
	'/labels': { GET: STOCK_EDITORS },
	'/scan': { GET: STOCK_HANDLERS },
	'/stock-take': { GET: STOCK_EDITORS, actions: { check: STOCK_EDITORS, commit: STOCK_EDITORS } },
	'/stock-take/[location=id]': { url: '/stock-take/99999999', GET: STOCK_EDITORS, actions: { check: STOCK_EDITORS, commit: STOCK_EDITORS } },
	'/api/v1/stock/scrap': { POST: STOCK_EDITORS },
	'/api/v1/stock/condition': { POST: STOCK_EDITORS },
	'/api/v1/stock/issue': { POST: STOCK_HANDLERS },
	'/api/v1/stock/return': { POST: STOCK_HANDLERS },
	'/api/v1/reservations': { GET: ANY_ROLE, POST: RESERVERS },
	'/api/v1/reservations/[id=id]': { url: '/api/v1/reservations/99999999', DELETE: RESERVERS },

	// ── imports, exports, datasheets ──
	'/api/v1/parts/export.csv': { GET: ANY_ROLE },
	'/api/v1/parts/[id=id]/datasheets': { url: '/api/v1/parts/99999999/datasheets', GET: ANY_ROLE, POST: STOCK_EDITORS },
	'/api/v1/datasheets/[id=id]': { url: '/api/v1/datasheets/99999999', GET: ANY_ROLE, DELETE: STOCK_EDITORS },
	'/api/v1/datasheets/[id=id]/thumbnail': { url: '/api/v1/datasheets/99999999/thumbnail', GET: ANY_ROLE },
	'/api/v1/datasheets/match': { POST: STOCK_EDITORS },
	'/api/v1/imports': { GET: STOCK_EDITORS, POST: STOCK_EDITORS },
	'/api/v1/imports/[id=id]': { url: '/api/v1/imports/99999999', GET: STOCK_EDITORS },
	'/imports': { GET: STOCK_EDITORS },
	'/imports/new': { GET: STOCK_EDITORS, actions: { default: STOCK_EDITORS } },
	'/imports/[id=id]': { url: '/imports/99999999', GET: STOCK_EDITORS, actions: { check: STOCK_EDITORS, commit: STOCK_EDITORS } },
	'/api/v1/imports/[id=id]/errors.csv': { url: '/api/v1/imports/99999999/errors.csv', GET: STOCK_EDITORS },
	'/imports/datasheets': { GET: STOCK_EDITORS },

	// ── Build from stock (solver) ──
	'/build': { GET: SOLVER_USERS, actions: { save: SOLVER_USERS, unlock: SOLVER_USERS } },
	'/build/[setup=id]': { url: '/build/99999999', GET: SOLVER_USERS, actions: { reserve: RESERVERS, unlock: SOLVER_USERS } },
	'/build/[setup=id]/sheet': { url: '/build/99999999/sheet', GET: SOLVER_USERS },
	'/build/setups': { GET: SOLVER_USERS },
	'/api/v1/solve': { POST: SOLVER_USERS },
	'/api/v1/setups': { GET: SOLVER_USERS, POST: SOLVER_USERS },
	'/api/v1/setups/[id=id]': { url: '/api/v1/setups/99999999', GET: SOLVER_USERS },
	'/api/v1/setups/[id=id]/reservations': { url: '/api/v1/setups/99999999/reservations', POST: RESERVERS },

	// ── purchasing (request viewers: purchasers and the stockroom, which may receive goods) ──
	'/reorder': { GET: PURCHASERS, actions: { create: PURCHASERS, unlock: PURCHASERS } },
	'/reorder/parts': { GET: PURCHASERS },
	'/reorder/parts/[id=id]': { url: '/reorder/parts/99999999', GET: PURCHASERS, actions: { default: PURCHASERS } },
	'/requests': { GET: REQUEST_VIEWERS, actions: { create: PURCHASERS } },
	'/requests/[id=id]': { url: '/requests/99999999', GET: REQUEST_VIEWERS, actions: { step: PURCHASERS, receive: REQUEST_VIEWERS, edit: PURCHASERS } },
	'/api/v1/reorder': { GET: PURCHASERS },
	'/api/v1/reorder/export.csv': { GET: PURCHASERS },
	'/api/v1/reorder/unlock': { POST: ANY_ROLE },
	'/api/v1/purchase-requests': { GET: REQUEST_VIEWERS, POST: PURCHASERS },
	'/api/v1/purchase-requests/[id=id]': { url: '/api/v1/purchase-requests/99999999', GET: REQUEST_VIEWERS, PATCH: REQUEST_VIEWERS }

	// ── imports, solver, purchasing: add your routes here ──
};
