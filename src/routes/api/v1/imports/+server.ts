import { json } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { suppliers } from '$lib/server/db/schema';
import { endpoint } from '$lib/server/api/http';
import { DomainError } from '$lib/server/errors';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import { appStore } from '$lib/server/files/store';
import * as importsService from '$lib/server/imports/service';

/** The import history, newest first. */
export const GET = endpoint(async (event) => {
	requireRole(event, STOCK_EDITORS);
	const q = importsService.listQuerySchema.parse(Object.fromEntries(event.url.searchParams));
	return json(await importsService.listImports(db, q));
}) satisfies RequestHandler;

const jsonField = (fields: Record<string, string>, name: string): unknown => {
	const v = fields[name];
	if (v === undefined || v === '') return undefined;
	try {
		return JSON.parse(v);
	} catch {
		throw new DomainError(400, 'invalid-input', `The field "${name}" is not valid JSON.`, { [name]: 'Not valid JSON.' });
	}
};
const flag = (fields: Record<string, string>, name: string) => ['true', '1', 'yes', 'on'].includes((fields[name] ?? '').toLowerCase());

/**
 * One-shot import: multipart `file`, optional `supplier` (name), `mapping` (JSON field → column;
 * default: suggested from the header, so an export needs none), `units` (JSON), `skuPrefix`,
 * `skipRejected`, `dryRun`. Runs to the end and answers with the report. The file streams to a
 * temporary file as it arrives (checked on the way), never whole into memory.
 */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, STOCK_EDITORS);
	const { fields, file } = await importsService.readCsvUpload(event.request);
	if (!file) throw new DomainError(400, 'no-file', 'Attach the file in the form field "file".', { file: 'Choose a file.' });
	try {
		let supplierId: number | null = null;
		const supplierName = (fields.supplier ?? '').trim();
		if (supplierName) {
			const [s] = await db.select({ id: suppliers.id }).from(suppliers).where(eq(suppliers.name, supplierName));
			if (!s) throw new DomainError(400, 'invalid-input', `There is no supplier "${supplierName}".`, { supplier: 'Unknown supplier.' });
			supplierId = s.id;
		}
		const mapping = jsonField(fields, 'mapping');
		const units = jsonField(fields, 'units');
		const store = appStore();
		const created = await importsService.createImport(db, store, { filename: file.filename, file: file.csv, supplierId, actorId: user.id });
		await importsService.saveMapping(db, created.id, {
			mapping: mapping ?? created.suggestion.mapping,
			units: units ?? (mapping ? {} : created.suggestion.units),
			skuPrefix: fields.skuPrefix ?? '',
			skipRejected: flag(fields, 'skipRejected')
		}, store);
		const mode = flag(fields, 'dryRun') ? 'check' : 'commit';
		const outcome = await importsService.runNow(db, store, created.id, mode, user.id);
		const report = await importsService.getReport(db, created.id, 1000);
		if (outcome.status === 'failed') {
			const status = outcome.rejected > 0 ? 400 : 503;
			return json(
				{ error: { code: outcome.rejected > 0 ? 'rows-rejected' : 'import-failed', message: outcome.message ?? 'The import failed.' }, report },
				{ status }
			);
		}
		return json(report, { status: mode === 'commit' ? 201 : 200 });
	} finally {
		await file.csv.remove();
	}
}) satisfies RequestHandler;
