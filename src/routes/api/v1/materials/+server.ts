import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ADMINS, ANY_ROLE } from '$lib/roles';
import * as labMaterials from '$lib/server/catalogue/lab-materials';

/** Every material with its dispersion formula, valid range and source (open, the lab's own, glass codes). */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	return json({ items: await labMaterials.listAllMaterials(db) });
}) satisfies RequestHandler;

/** Adds a lab material from a datasheet: Sellmeier `{ b, c }` or Cauchy `{ terms }`, range and source; 201. */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, ADMINS);
	return json(await labMaterials.createLabMaterial(db, await readJson(event.request), { id: user.id }), { status: 201 });
}) satisfies RequestHandler;
