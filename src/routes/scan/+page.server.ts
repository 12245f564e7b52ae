import type { PageServerLoad } from './$types';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS, STOCK_HANDLERS } from '$lib/roles';

/** The scan page: the camera runs in the browser; the server only says which operations this user may open. */
export const load = (async (event) => {
	const user = requireRole(event, STOCK_HANDLERS);
	return { canEdit: STOCK_EDITORS.includes(user.role) };
}) satisfies PageServerLoad;
