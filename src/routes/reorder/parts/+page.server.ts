import { redirect } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS } from '$lib/roles';
import { findPartIdBySku } from '$lib/server/catalogue/parts';

/** `?sku=…` finds a part's reorder settings; without a match it shows the lookup form again. */
export const load = (async (event) => {
	requireRole(event, PURCHASERS);
	const sku = (event.url.searchParams.get('sku') ?? '').trim().slice(0, 40);
	if (sku) {
		const id = await findPartIdBySku(db, sku);
		if (id) redirect(303, `/reorder/parts/${id}`);
	}
	return { sku, notFound: sku !== '' };
}) satisfies PageServerLoad;
