import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import { listLocations } from '$lib/server/stock/locations';
import { publicOrigin } from '$lib/server/accounts/notify';
import { makeLabels, MAX_LABELS } from '$lib/server/stock/labels';
import { isId } from '$lib/id';

const ids = (vals: string[]) => [...new Set(vals.filter(isId).map(Number))].slice(0, MAX_LABELS);

/** `?location=<id>` (repeated) and `?part=<id>` / `?skus=<list>` choose the labels; a GET form, so the sheet has an address. */
export const load = (async (event) => {
	requireRole(event, STOCK_EDITORS);
	const q = event.url.searchParams;
	const locationIds = ids(q.getAll('location'));
	const partIds = ids(q.getAll('part'));
	const skus = [...new Set((q.get('skus') ?? '').split(/[\s,;]+/).map((s) => s.trim()).filter((s) => s && s.length <= 40))].slice(0, MAX_LABELS);
	const [locations, made] = await Promise.all([listLocations(db), makeLabels(db, publicOrigin(), { locationIds, partIds, skus })]);
	return { locations, chosen: { locationIds, skus: q.get('skus') ?? '' }, labels: made.labels, unknownSkus: made.unknownSkus, max: MAX_LABELS };
}) satisfies PageServerLoad;
