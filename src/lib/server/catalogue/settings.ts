import { eq } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { settings } from '$lib/server/db/schema';
import { DEFAULT_WAVELENGTH_NM } from '$lib/optics';

/** The lab's default wavelength in nm (setting `defaultWavelengthNm`): the catalogue shows EFLs at it. */
export async function getDefaultWavelengthNm(db: DbOrTx): Promise<number> {
	const [row] = await db.select({ value: settings.value }).from(settings).where(eq(settings.key, 'defaultWavelengthNm')).limit(1);
	const v = typeof row?.value === 'string' ? Number(row.value) : row?.value;
	return typeof v === 'number' && Number.isFinite(v) && v > 0 ? v : DEFAULT_WAVELENGTH_NM;
}
