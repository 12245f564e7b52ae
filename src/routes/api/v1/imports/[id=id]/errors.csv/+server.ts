import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import { csvStream } from '$lib/server/imports/export';
import * as importsService from '$lib/server/imports/service';

const params = z.object({ id: z.coerce.number().int().positive() });

/** The row errors of an import as CSV: row, column, value, message. */
export const GET = endpoint(async (event) => {
	requireRole(event, STOCK_EDITORS);
	const { id } = params.parse(event.params);
	const report = await importsService.getReport(db, id, 0);
	const name = report.filename.replace(/\.[^.]*$/, '').replace(/[^A-Za-z0-9._-]/g, '_');
	return new Response(csvStream(importsService.errorReportCsv(db, id)), {
		headers: {
			'Content-Type': 'text/csv; charset=utf-8',
			'Content-Disposition': `attachment; filename="${name}-errors.csv"`,
			'X-Content-Type-Options': 'nosniff'
		}
	});
}) satisfies RequestHandler;
