import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { DomainError } from '$lib/server/errors';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, STOCK_EDITORS } from '$lib/roles';
import * as datasheets from '$lib/server/files/datasheets';
import { readMultipartStream } from '$lib/server/files/multipart';
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
	// The file streams to a temporary file as it arrives (type and size checked on the way), never whole into memory.
	const { file } = await readMultipartStream(event.request, {
		maxBodyBytes: MAX_PDF_BYTES + 64 * 1024,
		maxFileBytes: MAX_PDF_BYTES,
		handleFile: async (part) => ({ sheet: await datasheets.spoolDatasheet(part.stream), filename: part.filename }),
		discard: (f) => f.sheet.remove()
	});
	if (!file) throw new DomainError(400, 'no-file', 'Attach the file in the form field "file".', { file: 'Choose a file.' });
	try {
		const sheet = await datasheets.uploadDatasheet(db, appStore(), { partId: id, filename: file.filename, file: file.sheet, actorId: user.id });
		return json(sheet, { status: 201 });
	} finally {
		await file.sheet.remove();
	}
}) satisfies RequestHandler;
