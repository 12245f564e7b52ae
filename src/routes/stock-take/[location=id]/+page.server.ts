import { error } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import * as take from '$lib/server/stock/stock-take';
import { commitCount, countFailure } from '$lib/server/stock/stock-take-forms';
import { formFailure } from '$lib/server/form-failure';

/** The drawer's location id (the `id` matcher has checked it). */
const idOf = (params: { location: string }) => Number(params.location);

/** One drawer's booked lines, to count on a phone. */
export const load = (async (event) => {
	requireRole(event, STOCK_EDITORS);
	const drawer = await take.drawerContents(db, idOf(event.params));
	if (!drawer) error(404, { code: 'not-found', message: 'There is no such location.' });
	return { location: { id: drawer.location.id, code: drawer.location.code, name: drawer.location.name }, lines: drawer.lines };
}) satisfies PageServerLoad;

/** `count.<i>` fields with `sku.<i>`/`condition.<i>` beside them, plus one added part (`addSku`, `addQuantity`). */
function countFrom(form: FormData, code: string) {
	const lines: take.CountLine[] = [];
	const values: Record<string, string> = {};
	for (const [k, v] of form.entries()) if (typeof v === 'string') values[k] = v;
	for (const k of Object.keys(values)) {
		const m = /^count\.(\d+)$/.exec(k);
		if (!m || values[k].trim() === '') continue;
		lines.push({ locationCode: code, sku: values[`sku.${m[1]}`] ?? '', condition: values[`condition.${m[1]}`] ?? 'usable', quantity: values[k] });
	}
	if ((values.addSku ?? '').trim()) lines.push({ locationCode: code, sku: values.addSku, condition: 'usable', quantity: values.addQuantity ?? '' });
	return { lines, values };
}

export const actions = {
	check: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		const drawer = await take.drawerContents(db, idOf(event.params));
		if (!drawer) error(404, { code: 'not-found', message: 'There is no such location.' });
		const { lines, values } = countFrom(await event.request.formData(), drawer.location.code);
		if (!lines.length) return formFailure(400, { errors: { file: 'Type the count of at least one line (0 when none are there).' }, values });
		try {
			return { result: await take.stockTake(db, lines, { dryRun: true, actor: { id: user.id } }), lines, values };
		} catch (err) {
			return countFailure(err, values);
		}
	},
	commit: async (event) => {
		const user = requireRole(event, STOCK_EDITORS);
		idOf(event.params);
		return commitCount(db, await event.request.formData(), user.id);
	}
} satisfies Actions;
