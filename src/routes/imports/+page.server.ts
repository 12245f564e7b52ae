import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import * as importsService from '$lib/server/imports/service';

export const load = (async (event) => {
	requireRole(event, STOCK_EDITORS);
	const page = Math.max(1, Number(event.url.searchParams.get('page')) || 1);
	return await importsService.listImports(db, { page, pageSize: 50 });
}) satisfies PageServerLoad;
