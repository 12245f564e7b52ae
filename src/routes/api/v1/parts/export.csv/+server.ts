import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';
import { listQuerySchema } from '$lib/server/catalogue/list';
import { csvStream, partsCsv } from '$lib/server/imports/export';

/** The catalogue as CSV, with the same filters and sort as GET /api/v1/parts (all pages). */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	const q = listQuerySchema.parse(Object.fromEntries(event.url.searchParams));
	const day = new Date().toISOString().slice(0, 10);
	return new Response(csvStream(partsCsv(db, q)), {
		headers: {
			'Content-Type': 'text/csv; charset=utf-8',
			'Content-Disposition': `attachment; filename="glasscrib-catalogue-${day}.csv"`,
			'X-Content-Type-Options': 'nosniff'
		}
	});
}) satisfies RequestHandler;
