import fs from 'node:fs';
import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { DomainError } from '$lib/server/errors';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import { readCsvUpload } from '$lib/server/imports/service';
import { csvRecords, type Delimiter } from '$lib/server/imports/csv';
import { linesFromCsv, stockTake, StockTakeRefused } from '$lib/server/stock/stock-take';

/**
 * A stock take from a CSV (multipart `file` with the columns locationCode, sku, condition, quantity;
 * `dryRun`): the dry run answers booked, counted and difference per line (200); the commit writes one
 * adjustment per difference (reason "stock take") in one transaction and answers 201. Any refused line:
 * 400 `invalid-lines` with every refused line, nothing written.
 */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, STOCK_EDITORS);
	const { fields, file } = await readCsvUpload(event.request);
	if (!file) throw new DomainError(400, 'no-file', 'Attach the count in the form field "file".', { file: 'Choose a file.' });
	try {
		const dryRun = ['true', '1', 'yes', 'on'].includes((fields.dryRun ?? '').toLowerCase());
		const { lines, rows } = await linesFromCsv(csvRecords(fs.createReadStream(file.csv.path), file.csv.delimiter as Delimiter));
		try {
			const result = await stockTake(db, lines, { dryRun, actor: { id: user.id }, rowOf: (i) => rows[i] });
			return json(result, { status: dryRun ? 200 : 201 });
		} catch (err) {
			if (err instanceof StockTakeRefused) return json({ error: { code: err.code, message: err.message, fields: err.fields, lines: err.lines } }, { status: 400 });
			throw err;
		}
	} finally {
		await file.csv.remove();
	}
}) satisfies RequestHandler;
