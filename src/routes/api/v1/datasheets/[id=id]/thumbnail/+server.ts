import { Readable } from 'node:stream';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';
import * as datasheets from '$lib/server/files/datasheets';
import { appStore } from '$lib/server/files/store';

const params = z.object({ id: z.coerce.number().int().positive() });

/** The PNG thumbnail of a photo (made by us, so it may be shown inline in an <img>). */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	const { id } = params.parse(event.params);
	const { object, headers } = await datasheets.openDatasheet(db, appStore(), id, 'thumbnail');
	return new Response(Readable.toWeb(object.body) as ReadableStream, { headers });
}) satisfies RequestHandler;
