import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/server/auth/roles';
import { stockSummary } from '$lib/server/overview/summary';

export const load = (async (event) => {
	const user = requireRole(event, ANY_ROLE);
	return { summary: await stockSummary(db), role: user.role };
}) satisfies PageServerLoad;
