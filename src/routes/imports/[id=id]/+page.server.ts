import { error } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { imports } from '$lib/server/db/schema';
import { DomainError } from '$lib/server/errors';
import { failFrom } from '$lib/server/form-failure';
import { formStrings } from '$lib/server/catalogue/forms';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import { appStore } from '$lib/server/files/store';
import { fieldLabel, isLengthField, MAX_SURFACES, SCALAR_FIELDS, surfaceFields } from '$lib/server/imports/fields';
import * as importsService from '$lib/server/imports/service';
import { parseNumberCell } from '$lib/server/imports/rows';
import type { Delimiter } from '$lib/server/imports/csv';
import { formatMoney } from '$lib/money';

/** The import's id (the `id` matcher has checked it). */
const idOf = (params: { id: string }) => Number(params.id);

export const load = (async (event) => {
	requireRole(event, STOCK_EDITORS);
	const id = idOf(event.params);
	let report;
	try {
		report = await importsService.getReport(db, id, 200);
	} catch (err) {
		if (err instanceof importsService.ImportNotFound) error(404, { code: 'not-found', message: err.message });
		throw err;
	}
	const editable = report.status === 'uploaded' || report.status === 'checked' || report.status === 'failed' || report.interrupted;
	let preview: string[][] = [];
	let previewError: string | null = null;
	if (editable) {
		preview = await importsService.previewRows(db, appStore(), id).catch((err) => {
			previewError = err instanceof DomainError ? err.message : 'The stored file could not be read.';
			return [];
		});
	}
	const mappedSurfaces = Math.max(0, ...Object.keys(report.mapping).map((f) => Number(/^(?:r|t|material)(\d+)/.exec(f)?.[1] ?? 0)));
	const surfaceRows = Math.min(MAX_SURFACES, Math.max(3, mappedSurfaces + 1));
	const fields = [...SCALAR_FIELDS, ...Array.from({ length: surfaceRows }, (_, i) => surfaceFields(i + 1)).flat()].map((f) => ({
		field: f,
		label: fieldLabel(f),
		unit: f === 'unitPrice' ? 'price' : isLengthField(f) ? 'length' : null
	}));
	// Each preview row's price as the import will read it, with its currency (issue 16).
	const priceCol = report.header.indexOf(report.mapping.unitPrice ?? '');
	const currencyCol = report.header.indexOf(report.mapping.currency ?? '');
	const prices =
		priceCol < 0
			? null
			: preview.map((row) => {
					const raw = (row[priceCol] ?? '').trim();
					if (!raw) return { raw, text: 'no price', ok: true };
					const currency = (currencyCol >= 0 ? (row[currencyCol] ?? '').trim().toUpperCase() : '') || 'EUR';
					const v = parseNumberCell(raw, 'unitPrice', report.units.unitPrice as 'major' | 'minor' | undefined, report.delimiter as Delimiter);
					return typeof v === 'string' ? { raw, text: v, ok: false } : { raw, text: `${formatMoney(v, currency)} (${currency})`, ok: true };
				});
	return { report, preview, previewError, fields, editable, prices };
}) satisfies PageServerLoad;

function mappingFrom(form: FormData) {
	const mapping: Record<string, string> = {};
	const units: Record<string, string> = {};
	for (const [k, v] of form.entries()) {
		if (typeof v !== 'string') continue;
		if (k.startsWith('map.') && v) mapping[k.slice(4)] = v;
		if (k.startsWith('unit.') && v) units[k.slice(5)] = v;
	}
	return { mapping, units, skuPrefix: String(form.get('skuPrefix') ?? ''), skipRejected: form.get('skipRejected') === 'on' };
}

export const actions = {
	check: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const id = idOf(event.params);
		const form = await event.request.formData();
		try {
			await importsService.saveMapping(db, id, mappingFrom(form), appStore());
			await importsService.beginRun(db, id, 'check');
		} catch (err) {
			return failFrom(err, { form: 'check', values: formStrings(form) });
		}
		importsService.startRun(db, appStore(), id, 'check', user.id);
		return { started: 'check' };
	},
	commit: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const id = idOf(event.params);
		const form = await event.request.formData();
		const skipRejected = form.get('skipRejected') === 'on';
		try {
			const [rec] = await db.select({ options: imports.options }).from(imports).where(eq(imports.id, id));
			if (!rec) throw new importsService.ImportNotFound(id);
			await db
				.update(imports)
				.set({ options: { ...(rec.options ?? {}), skipRejected } })
				.where(eq(imports.id, id));
			await importsService.beginRun(db, id, 'commit');
		} catch (err) {
			return failFrom(err, { form: 'commit' });
		}
		importsService.startRun(db, appStore(), id, 'commit', user.id);
		return { started: 'commit' };
	}
} satisfies Actions;
