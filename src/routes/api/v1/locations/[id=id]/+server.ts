import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { DomainError } from '$lib/server/errors';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS } from '$lib/roles';
import * as locations from '$lib/server/stock/locations';
import { idParam } from '$lib/server/catalogue/params';

/** One location with the stock it holds. */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	const id = idParam(event.params.id, 'location');
	const l = await locations.getLocation(db, id);
	if (!l) throw new DomainError(404, 'not-found', `There is no location ${id}.`);
	return json({ ...locations.toLocationJson(l), stock: await locations.stockRows(db, { locationId: id }) });
}) satisfies RequestHandler;

/** Renames a location (`code`, `name`) or archives/restores it (`archived`; only an empty one can be archived). */
export const PATCH = endpoint(async (event) => {
	const user = requireRole(event, STOCK_EDITORS);
	const id = idParam(event.params.id, 'location');
	const body = locations.locationPatchSchema.parse(await readJson(event.request));
	const current = await locations.getLocation(db, id);
	if (!current) throw new DomainError(404, 'not-found', `There is no location ${id}.`);
	let out = locations.toLocationJson(current);
	if (body.code !== undefined || body.name !== undefined) {
		out = await locations.updateLocation(db, id, { code: body.code ?? current.code, name: body.name ?? current.name }, { id: user.id });
	}
	if (body.archived !== undefined) out = await locations.setLocationArchived(db, id, body.archived, { id: user.id });
	return json(out);
}) satisfies RequestHandler;
