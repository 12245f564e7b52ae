import { redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { failFrom, formFailure } from '$lib/server/form-failure';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import { listSuppliers } from '$lib/server/catalogue/materials';
import { appStore } from '$lib/server/files/store';
import { CSV_MAX_BYTES } from '$lib/server/imports/csv';

import * as importsService from '$lib/server/imports/service';

export const load = (async (event) => {
	requireRole(event, STOCK_EDITORS);
	return { suppliers: await listSuppliers(db), maxMb: Math.round(CSV_MAX_BYTES / (1024 * 1024)) };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		let id: number;
		let values = { supplierId: '' };
		try {
			// A form sent with no file chosen still has an empty, unnamed file part.
			const { fields, file } = await importsService.readCsvUpload(event.request, { skipUnnamed: true });
			const supplierId = fields.supplierId ?? '';
			values = { supplierId };
			if (!file) return formFailure(400, { errors: { file: 'Choose a CSV file.' }, values });
			try {
				if (supplierId && !/^\d+$/.test(supplierId)) return formFailure(400, { errors: { supplierId: 'Choose a supplier from the list.' }, values });
				({ id } = await importsService.createImport(db, appStore(), {
					filename: file.filename,
					file: file.csv,
					supplierId: supplierId ? Number(supplierId) : null,
					actorId: user.id
				}));
			} finally {
				await file.csv.remove();
			}
		} catch (err) {
			return failFrom(err, { values });
		}
		redirect(303, `/imports/${id}`);
	}
} satisfies Actions;
