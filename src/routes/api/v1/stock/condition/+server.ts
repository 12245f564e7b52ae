import type { RequestHandler } from './$types';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_OPERATION_ROLES } from '$lib/roles';
import { runOperation } from '$lib/server/stock/api';

/** Changes the condition of units in place. 409 'insufficient-stock' when the stock would go below zero. */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, STOCK_OPERATION_ROLES.condition);
	return runOperation('condition', event, user);
}) satisfies RequestHandler;
