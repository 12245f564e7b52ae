import type { RequestHandler } from './$types';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_OPERATION_ROLES } from '$lib/roles';
import { runOperation } from '$lib/server/stock/api';

/** Issues usable units to a person or project (never units others reserved). 409 'insufficient-stock' when the stock would go below zero. */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, STOCK_OPERATION_ROLES.issue);
	return runOperation('issue', event, user);
}) satisfies RequestHandler;
