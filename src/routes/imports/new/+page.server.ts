import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { ApiError, DomainError } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/server/auth/roles';
import { listSuppliers } from '$lib/server/catalogue/materials';
import { readMultipartStream } from '$lib/server/files/multipart';
import { appStore } from '$lib/server/files/store';
import { CSV_MAX_BYTES, spoolCsv } from '$lib/server/imports/csv';

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
			// The file streams to a temporary file as it arrives (checked on the way), never whole into memory.
			const { fields, file } = await readMultipartStream(event.request, {
				maxBodyBytes: CSV_MAX_BYTES + 256 * 1024,
				maxFileBytes: CSV_MAX_BYTES,
				handleFile: async (part) => {
					// A form sent with no file chosen still has an empty file part.
					if (part.filename === '') {
						part.stream.resume();
						return null;
					}
					return { csv: await spoolCsv(part.stream), filename: part.filename };
				},
				discard: async (file) => file?.csv.remove()
			});
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
