import { z } from 'zod';
import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { SOLVER_USERS } from '$lib/roles';
import * as setupList from '$lib/server/solver/setup-list';

/** Setups per page of the full list. */
const PAGE_SIZE = 50;

const listQuery = z.object({
	q: z.string().max(160).catch(''),
	whose: z.enum(['all', 'mine']).catch('all'),
	page: z.coerce.number().int().min(1).max(10_000).catch(1)
});

/** Every saved setup (the user's own first), filtered by name and owner, 50 per page. */
export const load = (async (event) => {
	const user = requireRole(event, SOLVER_USERS);
	const p = event.url.searchParams;
	const query = listQuery.parse({ q: p.get('q') ?? '', whose: p.get('whose') ?? 'all', page: p.get('page') ?? 1 });
	const { items, total } = await setupList.listSavedSetups(db, {
		userId: user.id,
		q: query.q,
		mineOnly: query.whose === 'mine',
		limit: PAGE_SIZE,
		offset: (query.page - 1) * PAGE_SIZE
	});
	return { ...query, items, total, pageSize: PAGE_SIZE };
}) satisfies PageServerLoad;
