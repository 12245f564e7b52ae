import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import * as datasheets from '$lib/server/files/datasheets';

/** Bulk attach, step 1: which dropped files are named after a SKU (the rest are for manual matching). */
export const POST = endpoint(async (event) => {
	requireRole(event, STOCK_EDITORS);
	const { filenames } = datasheets.matchInputSchema.parse(await readJson(event.request));
	return json({ matches: await datasheets.matchFilenames(db, filenames) });
}) satisfies RequestHandler;
