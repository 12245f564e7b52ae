import type { Actions, PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { ADMINS } from '$lib/roles';
import { failFrom } from '$lib/server/form-failure';
import { COMMON_WAVELENGTHS_NM, LAB_WAVELENGTH_RANGE_NM, labSettingsSchema, setDefaultWavelength, wavelengthSetting } from '$lib/server/catalogue/lab-settings';

export const load = (async (event) => {
	requireRole(event, ADMINS);
	return { wavelength: await wavelengthSetting(db), common: COMMON_WAVELENGTHS_NM, range: LAB_WAVELENGTH_RANGE_NM };
}) satisfies PageServerLoad;

export const actions = {
	wavelength: async (event) => {
		const user = requireRole(event, ADMINS);
		const values = { defaultWavelengthNm: String((await event.request.formData()).get('defaultWavelengthNm') ?? '').trim().replace(',', '.') };
		const parsed = labSettingsSchema.safeParse(values);
		if (!parsed.success) return failFrom(parsed.error, { values });
		const done = await setDefaultWavelength(db, parsed.data, user);
		return { values, done };
	}
} satisfies Actions;
