import { Readable } from 'node:stream';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS } from '$lib/server/auth/roles';
import * as datasheets from '$lib/server/files/datasheets';
import { appStore } from '$lib/server/files/store';

const params = z.object({ id: z.coerce.number().int().positive() });

/** Streams the file to a signed-in user, as an attachment that the browser never renders as a page. */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	const { id } = params.parse(event.params);
	const { object, headers } = await datasheets.openDatasheet(db, appStore(), id);
	return new Response(Readable.toWeb(object.body) as ReadableStream, { headers });
}) satisfies RequestHandler;

/** Deletes the datasheet and its stored objects (both or neither). */
export const DELETE = endpoint(async (event) => {
	const user = requireRole(event, STOCK_EDITORS);
	const { id } = params.parse(event.params);
	await datasheets.deleteDatasheet(db, appStore(), id, user.id);
	return new Response(null, { status: 204 });
}) satisfies RequestHandler;
