import fs from 'node:fs';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import { readCsvUpload } from '$lib/server/imports/service';
import { csvRecords, type Delimiter } from '$lib/server/imports/csv';
import { listLocations } from '$lib/server/stock/locations';
import * as take from '$lib/server/stock/stock-take';
import { commitCount, countFailure } from '$lib/server/stock/stock-take-forms';
import { failFrom, formFailure } from '$lib/server/form-failure';

export const load = (async (event) => {
	requireRole(event, STOCK_EDITORS);
	const locations = await listLocations(db);
	return { locations, columns: take.STOCK_TAKE_COLUMNS };
}) satisfies PageServerLoad;

export const actions = {
	/** Dry run of an uploaded count file. */
	check: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		let upload;
		try {
			upload = await readCsvUpload(event.request, { skipUnnamed: true });
		} catch (err) {
			return failFrom(err);
		}
		if (!upload.file) return formFailure(400, { errors: { file: 'Choose the CSV file of the count.' } });
		try {
			const { lines, rows } = await take.linesFromCsv(csvRecords(fs.createReadStream(upload.file.csv.path), upload.file.csv.delimiter as Delimiter));
			return { result: await take.stockTake(db, lines, { dryRun: true, actor: { id: user.id }, rowOf: (i) => rows[i] }), lines };
		} catch (err) {
			return countFailure(err);
		} finally {
			await upload.file.csv.remove();
		}
	},
	/** Commit of the lines the dry run showed (sent back as JSON; checked again under the part locks). */
	commit: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		return commitCount(db, await event.request.formData(), user.id);
	}
} satisfies Actions;
