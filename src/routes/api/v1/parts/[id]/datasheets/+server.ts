import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS } from '$lib/server/auth/roles';
import * as datasheets from '$lib/server/files/datasheets';
import { fileField, readMultipart } from '$lib/server/files/multipart';
import { MAX_PDF_BYTES } from '$lib/server/files/magic';
import { appStore } from '$lib/server/files/store';

const params = z.object({ id: z.coerce.number().int().positive() });

/** The datasheets and photos of a part. */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	const { id } = params.parse(event.params);
	return json({ items: await datasheets.listDatasheets(db, id) });
}) satisfies RequestHandler;

/** Uploads a datasheet (PDF) or photo (PNG, JPEG) for a part: multipart field "file". */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, STOCK_EDITORS);
	const { id } = params.parse(event.params);
	const form = await readMultipart(event.request, MAX_PDF_BYTES + 64 * 1024);
	const file = fileField(form);
	const bytes = new Uint8Array(await file.arrayBuffer());
	const sheet = await datasheets.uploadDatasheet(db, appStore(), { partId: id, filename: file.name, bytes, actorId: user.id });
	return json(sheet, { status: 201 });
}) satisfies RequestHandler;
