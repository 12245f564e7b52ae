import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { PURCHASERS } from '$lib/roles';
import * as board from '$lib/server/purchasing/board';
import * as csv from '$lib/server/purchasing/csv';
import { exportQuery } from '$lib/server/purchasing/params';

/**
 * The selected board rows as a CSV for the supplier: `?partId=1&partId=2` (the board's form),
 * optional `qty-<partId>=n` to override the suggested quantity.
 */
export const GET = endpoint(async (event) => {
	requireRole(event, PURCHASERS);
	const { partIds, quantities } = exportQuery(event.url.searchParams);
	const rows = await board.boardRows(db, { partIds });
	const body = csv.toOrderCsv(rows.map((r) => csv.orderLine(r, quantities.get(r.partId) ?? r.suggestedQuantity)));
	const day = new Date().toISOString().slice(0, 10);
	return new Response('\ufeff' + body, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="reorder-${day}.csv"`
		}
	});
}) satisfies RequestHandler;
