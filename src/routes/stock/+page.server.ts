import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS, STOCK_HANDLERS } from '$lib/roles';
import { listLocations, stockRows } from '$lib/server/stock/locations';
import { idOf } from '$lib/id';

/** Stock by location; `?locationId=` shows one location. */
export const load = (async (event) => {
	const user = requireRole(event, ANY_ROLE);
	const raw = event.url.searchParams.get('locationId');
	const locationId = idOf(raw) ?? undefined;
	const [locations, rows] = await Promise.all([listLocations(db), stockRows(db, { locationId })]);
	return { locations, rows, locationId: locationId ?? null, canCount: STOCK_EDITORS.includes(user.role), canScan: STOCK_HANDLERS.includes(user.role) };
}) satisfies PageServerLoad;
