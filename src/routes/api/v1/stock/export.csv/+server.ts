import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';
import { csvStream, stockCsv, stockExportQuerySchema } from '$lib/server/imports/export';

/** Stock by location as CSV (location, part, condition, quantity); `locationId` limits it to one location. */
export const GET = endpoint(async (event) => {
	requireRole(event, ANY_ROLE);
	const q = stockExportQuerySchema.parse(Object.fromEntries(event.url.searchParams));
	const day = new Date().toISOString().slice(0, 10);
	return new Response(csvStream(stockCsv(db, q)), {
		headers: {
			'Content-Type': 'text/csv; charset=utf-8',
			'Content-Disposition': `attachment; filename="glasscrib-stock-${day}.csv"`,
			'X-Content-Type-Options': 'nosniff'
		}
	});
}) satisfies RequestHandler;
