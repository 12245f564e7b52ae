import type { RequestHandler } from './$types';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_OPERATION_ROLES } from '$lib/roles';
import { runOperation } from '$lib/server/stock/api';

/** Moves units between locations. 409 'insufficient-stock' when the stock would go below zero. */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, STOCK_OPERATION_ROLES.move);
	return runOperation('move', event, user);
}) satisfies RequestHandler;
