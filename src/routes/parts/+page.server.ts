import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole, hasRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS } from '$lib/roles';
import * as parts from '$lib/server/catalogue/parts';
import { filterOptions, listQuerySchema } from '$lib/server/catalogue/list';
import { getDefaultWavelengthNm } from '$lib/server/catalogue/settings';
import { zodFields } from '$lib/server/errors';

/** The catalogue page renders its first page on the server from the URL; the client then pages through the API. */
export const load = (async (event) => {
	const user = requireRole(event, ANY_ROLE);
	const params = Object.fromEntries(event.url.searchParams);
	const hidden = (params.hide ?? '').split(',').filter(Boolean);
	delete params.hide;
	const parsed = listQuerySchema.safeParse(params);
	if (!parsed.success) {
		const fields = zodFields(parsed.error);
		error(400, { message: `The catalogue link has a bad filter: ${Object.entries(fields).map(([k, v]) => `${k}: ${v}`).join('; ')}` });
	}
	const [result, options, wavelengthNm] = await Promise.all([parts.listParts(db, parsed.data), filterOptions(db), getDefaultWavelengthNm(db)]);
	return { result, options, wavelengthNm, hidden, canEdit: hasRole(user, STOCK_EDITORS) };
}) satisfies PageServerLoad;
