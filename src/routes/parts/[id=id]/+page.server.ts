import { error, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad, RequestEvent } from './$types';
import { db } from '$lib/server/db';
import { hasRole, requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, RESERVERS, STOCK_EDITORS, STOCK_OPERATION_ROLES, stockOperationsFor } from '$lib/roles';
import * as parts from '$lib/server/catalogue/parts';
import * as measurements from '$lib/server/catalogue/measurements';
import { computeDerived } from '$lib/server/catalogue/derived';
import { syncLabMaterials } from '$lib/server/catalogue/lab-materials';
import { opticsPartOf } from '$lib/server/catalogue/derived';
import { getDefaultWavelengthNm } from '$lib/server/catalogue/settings';
import { readForm, toNumber } from '$lib/server/catalogue/forms';
import { listLocations, stockRows } from '$lib/server/stock/locations';
import { movementRows } from '$lib/server/stock/operations';
import * as reservations from '$lib/server/stock/reservations';
import { listProjects } from '$lib/server/stock/projects';
import { guarded, stockFormAction } from '$lib/server/stock/form-actions';
import { formFailure } from '$lib/server/form-failure';

/** The part's id (the `id` matcher has checked it). */
const idOf = (event: Pick<RequestEvent, 'params'>) => Number(event.params.id);

export const load = (async (event) => {
	const user = requireRole(event, ANY_ROLE);
	const id = idOf(event);
	const record = await parts.getPart(db, id);
	await syncLabMaterials(db);
	if (!record) error(404, { message: 'There is no such part.' });
	const defaultNm = await getDefaultWavelengthNm(db);
	const wlParam = toNumber(event.url.searchParams.get('wl'));
	const wavelengthNm = typeof wlParam === 'number' && wlParam >= 200 && wlParam <= 20000 ? wlParam : defaultNm;
	const p = record.part;
	const optics = opticsPartOf(p, record.surfaces); // getPart reads them in position order
	const m = record.latestMeasurement;
	const measured = m ? { eflMm: m.eflMm, wavelengthNm: m.wavelengthNm } : null;
	// What the solver uses (measured when there is one) and the nominal model, at the chosen wavelength.
	const used = computeDerived(optics, wavelengthNm, measured);
	const nominal = computeDerived(optics, wavelengthNm, null);
	// Measured vs nominal: both at the measurement's own wavelength.
	const nominalAtMeasurement = m ? computeDerived(optics, m.wavelengthNm, null) : null;
	const comparison =
		m && nominalAtMeasurement?.ok
			? {
					measuredEflMm: m.eflMm,
					nominalEflMm: nominalAtMeasurement.value.eflMm,
					wavelengthNm: m.wavelengthNm,
					differencePercent: ((m.eflMm - nominalAtMeasurement.value.eflMm) / nominalAtMeasurement.value.eflMm) * 100
				}
			: null;
	const [json, stock, reservationList, ledger, measurementList, locs, projects] = await Promise.all([
		parts.getPartJson(db, id),
		stockRows(db, { partId: id }),
		reservations.reservationRows(db, { partId: id }),
		movementRows(db, { partId: id, limit: 50 }),
		measurements.listMeasurements(db, id),
		listLocations(db),
		listProjects(db)
	]);
	return {
		part: json,
		wavelengthNm,
		defaultWavelengthNm: defaultNm,
		used,
		nominal,
		comparison,
		stock,
		reservations: reservationList,
		ledger,
		measurements: measurementList,
		locations: locs.map((l) => ({ id: l.id, code: l.code, name: l.name })),
		projects,
		userId: user.id,
		can: {
			edit: hasRole(user, STOCK_EDITORS),
			reserve: hasRole(user, RESERVERS)
		},
		/** The stock operations this role may run here (the table in `$lib/roles`). */
		ops: stockOperationsFor(user.role)
	};
}) satisfies PageServerLoad;

export const actions = {
	receive: async (event) => {
		const user = requireRole(event, STOCK_OPERATION_ROLES.receive);
		return stockFormAction(event, 'receive', idOf(event), user);
	},
	move: async (event) => {
		const user = requireRole(event, STOCK_OPERATION_ROLES.move);
		return stockFormAction(event, 'move', idOf(event), user);
	},
	issue: async (event) => {
		const user = requireRole(event, STOCK_OPERATION_ROLES.issue);
		return stockFormAction(event, 'issue', idOf(event), user);
	},
	return: async (event) => {
		const user = requireRole(event, STOCK_OPERATION_ROLES.return);
		return stockFormAction(event, 'return', idOf(event), user);
	},
	adjust: async (event) => {
		const user = requireRole(event, STOCK_OPERATION_ROLES.adjust);
		return stockFormAction(event, 'adjust', idOf(event), user);
	},
	scrap: async (event) => {
		const user = requireRole(event, STOCK_OPERATION_ROLES.scrap);
		return stockFormAction(event, 'scrap', idOf(event), user);
	},
	condition: async (event) => {
		const user = requireRole(event, STOCK_OPERATION_ROLES.condition);
		return stockFormAction(event, 'condition', idOf(event), user);
	},
	measure: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const form = await event.request.formData();
		const input = readForm(form, ['eflMm', 'wavelengthNm', 'uncertaintyMm'], ['method', 'measuredAt', 'note']);
		return guarded('measure', form, () => measurements.recordMeasurement(db, idOf(event), input, { id: user.id }));
	},
	reserve: async (event) => {
		const user = requireRole(event, RESERVERS);
		const form = await event.request.formData();
		const input: Record<string, unknown> = { ...readForm(form, ['quantity', 'projectId'], ['until', 'note']), partId: idOf(event) };
		// A date picked in the form means "to the end of that day" (UTC).
		if (typeof input.until === 'string' && /^\d{4}-\d{2}-\d{2}$/.test(input.until)) input.until = `${input.until}T23:59:59Z`;
		const out = await guarded('reserve', form, () => reservations.createReservation(db, input, { id: user.id }));
		// After reserving, the form keeps the project and date (the next reservation is often for the same project).
		return 'ok' in out ? { ...out, values: { projectId: String(form.get('projectId') ?? ''), until: String(form.get('until') ?? '') } } : out;
	},
	release: async (event) => {
		const user = requireRole(event, RESERVERS);
		const form = await event.request.formData();
		const rid = Number(form.get('reservationId'));
		if (!Number.isInteger(rid) || rid <= 0) return formFailure(404, { form: 'release', message: 'There is no such reservation.' });
		return guarded('release', form, () => reservations.releaseReservation(db, rid, user));
	},
	archive: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const form = await event.request.formData();
		const out = await guarded('archive', form, () => parts.archivePart(db, idOf(event), { id: user.id }));
		if ('ok' in out && out.result.outcome === 'deleted') redirect(303, '/parts');
		return out;
	},
	restore: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const form = await event.request.formData();
		return guarded('restore', form, () => parts.restorePart(db, idOf(event), { id: user.id }));
	}
} satisfies Actions;
