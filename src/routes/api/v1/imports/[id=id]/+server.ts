import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import * as importsService from '$lib/server/imports/service';

const params = z.object({ id: z.coerce.number().int().positive() });

/** An import's status, progress, counts and row errors (the wizard polls this while a step runs). */
export const GET = endpoint(async (event) => {
	requireRole(event, STOCK_EDITORS);
	const { id } = params.parse(event.params);
	const { errors } = importsService.reportQuerySchema.parse(Object.fromEntries(event.url.searchParams));
	return json(await importsService.getReport(db, id, errors));
}) satisfies RequestHandler;
