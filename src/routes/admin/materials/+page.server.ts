import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { ADMINS } from '$lib/roles';
import { failFrom } from '$lib/server/form-failure';
import { toNumber } from '$lib/server/catalogue/forms';
import * as labMaterials from '$lib/server/catalogue/lab-materials';

export const load = (async (event) => {
	requireRole(event, ADMINS);
	return { materials: await labMaterials.listAllMaterials(db), range: labMaterials.LAB_MATERIAL_RANGE_NM };
}) satisfies PageServerLoad;

/** "1.03961212, 0.231792344 0.01" → numbers (commas, semicolons or blanks between them); a word that is no number stays text, so the schema names the field. */
function list(text: string): unknown[] {
	return text
		.split(/[\s;,]+/)
		.filter(Boolean)
		.map((w) => toNumber(w));
}

const FIELDS = ['code', 'name', 'formula', 'b', 'c', 'terms', 'minNm', 'maxNm', 'source'] as const;

export const actions = {
	create: async (event) => {
		const user = requireRole(event, ADMINS);
		const form = await event.request.formData();
		const values = Object.fromEntries(FIELDS.map((k) => [k, String(form.get(k) ?? '')])) as Record<(typeof FIELDS)[number], string>;
		const body: Record<string, unknown> = {
			formula: values.formula,
			code: values.code,
			name: values.name,
			minNm: toNumber(values.minNm),
			maxNm: toNumber(values.maxNm),
			source: values.source
		};
		if (values.formula === 'cauchy') body.terms = list(values.terms);
		else {
			body.b = list(values.b);
			body.c = list(values.c);
		}
		try {
			const created = await labMaterials.createLabMaterial(db, body, user);
			return { created };
		} catch (e) {
			return failFrom(e, { form: 'create', values });
		}
	}
} satisfies Actions;
