import { Readable } from 'node:stream';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { DomainError } from '$lib/server/errors';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS } from '$lib/roles';
import * as datasheets from '$lib/server/files/datasheets';
import { appStore } from '$lib/server/files/store';

const params = z.object({ id: z.coerce.number().int().positive() });

/**
 * Streams the file to a signed-in user: as an attachment, or with `?view=inline` shown in the browser's
 * own viewer. Either way under `default-src 'none'; sandbox` and nosniff, so it never runs as a page of ours.
 */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	const { id } = params.parse(event.params);
	const view = event.url.searchParams.get('view');
	if (view !== null && view !== 'inline') throw new DomainError(400, 'invalid-input', 'view is "inline" or absent.', { view: 'Use view=inline.' });
	const { object, headers } = await datasheets.openDatasheet(db, appStore(), id, 'file', view === 'inline' ? 'inline' : 'attachment');
	return new Response(Readable.toWeb(object.body) as ReadableStream, { headers });
}) satisfies RequestHandler;

/** Deletes the datasheet and its stored objects (both or neither). */
export const DELETE = endpoint(async (event) => {
	const user = requireRole(event, STOCK_EDITORS);
	const { id } = params.parse(event.params);
	await datasheets.deleteDatasheet(db, appStore(), id, user.id);
	return new Response(null, { status: 204 });
}) satisfies RequestHandler;
