import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS } from '$lib/roles';
import * as board from '$lib/server/purchasing/board';

/** The reorder board: flagged parts and parts that would unlock a saved setup. */
export const GET = endpoint(async (event) => {
	requireRole(event, PURCHASERS);
	return json({ items: await board.boardRows(db), usageDays: board.USAGE_DAYS });
}) satisfies RequestHandler;
