import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { ApiError, DomainError } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/server/auth/roles';
import { listSuppliers } from '$lib/server/catalogue/materials';

type Errors = { file?: string; supplierId?: string };
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
		let form: FormData;
		try {
			form = await event.request.formData();
		} catch {
			return fail(413, { errors: { file: 'The upload could not be read (too large?).' } as Errors, values: { supplierId: '' } });
		}
		const supplierId = String(form.get('supplierId') ?? '');
		const values = { supplierId };
		const file = form.get('file');
		if (!(file instanceof File) || (file.size === 0 && file.name === '')) {
			return fail(400, { errors: { file: 'Choose a CSV file.' } as Errors, values });
		}
		if (supplierId && !/^\d+$/.test(supplierId)) return fail(400, { errors: { supplierId: 'Choose a supplier from the list.' } as Errors, values });
		let id: number;
		try {
			const bytes = new Uint8Array(await file.arrayBuffer());
			({ id } = await importsService.createImport(db, appStore(), {
				filename: file.name,
				bytes,
				supplierId: supplierId ? Number(supplierId) : null,
				actorId: user.id
			}));
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
