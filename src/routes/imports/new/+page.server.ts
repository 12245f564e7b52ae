import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { ApiError, DomainError } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/server/auth/roles';
import { listSuppliers } from '$lib/server/catalogue/materials';
import { appStore } from '$lib/server/files/store';
import { CSV_MAX_BYTES } from '$lib/server/imports/csv';

type Errors = { file?: string; supplierId?: string };
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
			if (!file) return fail(400, { errors: { file: 'Choose a CSV file.' } as Errors, values });
			try {
				if (supplierId && !/^\d+$/.test(supplierId)) return fail(400, { errors: { supplierId: 'Choose a supplier from the list.' } as Errors, values });
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
			if (err instanceof ApiError || err instanceof DomainError) {
				const field = err.fields?.supplier ? 'supplierId' : 'file';
				return fail(err.status, { errors: { [field]: err.message } as Errors, values });
			}
			throw err;
		}
		redirect(303, `/imports/${id}`);
	}
} satisfies Actions;
