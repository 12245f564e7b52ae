/**
 * Lab settings an administrator changes on /admin/settings. For now the lab's default wavelength:
 * the catalogue stores, filters and sorts every part's EFL at it, so changing it recomputes the
 * stored EFL of every part (`recomputeDerived`, in batches: a few reads and one UPDATE per 1000
 * parts), all in one transaction with the setting itself.
 */
import { syncLabMaterials } from './lab-materials';
import { and, asc, desc, eq, gt, inArray } from 'drizzle-orm';
import { escape } from 'mysql2';
import { sql } from 'drizzle-orm';
import { z } from 'zod';
import type { DbOrTx, Tx } from '$lib/server/db';
import { measurements, partSurfaces, parts, settings } from '$lib/server/db/schema';
import { DEFAULT_WAVELENGTH_NM, GLASS_CODE_RANGE_NM } from '$lib/optics';
import { recordAudit } from '$lib/server/audit';
import { changeStock } from '$lib/server/stock/version';
import { opticsPartOf, paraxialColumns, type MeasuredEfl } from './derived';
import { getDefaultWavelengthNm } from './settings';

/** Wavelengths any catalogue glass can be computed at: glass codes are fitted for 365–1100 nm (see the optics core). */
export const LAB_WAVELENGTH_RANGE_NM = GLASS_CODE_RANGE_NM;

/** Lines labs often work at, offered as choices (common practice, no source). */
export const COMMON_WAVELENGTHS_NM: readonly { nm: number; label: string }[] = [
	{ nm: 486.1, label: 'F line, hydrogen' },
	{ nm: 532, label: 'doubled Nd laser' },
	{ nm: DEFAULT_WAVELENGTH_NM, label: 'd line, helium' },
	{ nm: 632.8, label: 'helium–neon laser' },
	{ nm: 656.3, label: 'C line, hydrogen' },
	{ nm: 780, label: 'near-infrared diode' },
	{ nm: 1064, label: 'Nd laser' }
];

export const labSettingsSchema = z
	.object({
		defaultWavelengthNm: z.coerce
			.number({ error: 'Enter a wavelength in nm.' })
			.min(LAB_WAVELENGTH_RANGE_NM[0], `Between ${LAB_WAVELENGTH_RANGE_NM[0]} and ${LAB_WAVELENGTH_RANGE_NM[1]} nm.`)
			.max(LAB_WAVELENGTH_RANGE_NM[1], `Between ${LAB_WAVELENGTH_RANGE_NM[0]} and ${LAB_WAVELENGTH_RANGE_NM[1]} nm.`)
			.transform((v) => Math.round(v * 10) / 10)
	})
	.strict();

export interface RecomputeOutcome {
	parts: number;
	/** Parts whose EFL could not be computed at the wavelength from the prescription (kept from the datasheet, or none). */
	fellBack: number;
}

const BATCH = 1000;

/**
 * Recomputes the stored EFL (`paraxial_efl_mm`, `efl_source`) of every part, or of `partIds`, at
 * `wavelengthNm` with the same rules as a single part (`paraxialColumns`: prescription, latest
 * measurement rescaled, or datasheet numbers). Run it inside the transaction that changes the setting.
 */
export async function recomputeDerived(tx: DbOrTx, wavelengthNm: number, opts: { partIds?: readonly number[] } = {}): Promise<RecomputeOutcome> {
	const out: RecomputeOutcome = { parts: 0, fellBack: 0 };
	let after = 0;
	for (;;) {
		const cond = opts.partIds ? and(gt(parts.id, after), inArray(parts.id, opts.partIds.length ? [...opts.partIds] : [-1])) : gt(parts.id, after);
		const rows = await tx.select().from(parts).where(cond).orderBy(asc(parts.id)).limit(BATCH);
		if (!rows.length) return out;
		after = rows[rows.length - 1].id;
		const ids = rows.map((r) => r.id);
		const surfaces = await tx.select().from(partSurfaces).where(inArray(partSurfaces.partId, ids)).orderBy(asc(partSurfaces.partId), asc(partSurfaces.position));
		const surfacesOf = new Map<number, (typeof surfaces)[number][]>();
		for (const s of surfaces) surfacesOf.set(s.partId, [...(surfacesOf.get(s.partId) ?? []), s]);
		const latest = new Map<number, MeasuredEfl>();
		const ms = await tx
			.select({ partId: measurements.partId, eflMm: measurements.eflMm, wavelengthNm: measurements.wavelengthNm })
			.from(measurements)
			.where(inArray(measurements.partId, ids))
			.orderBy(desc(measurements.measuredAt), desc(measurements.id));
		for (const m of ms) if (!latest.has(m.partId)) latest.set(m.partId, { eflMm: m.eflMm, wavelengthNm: m.wavelengthNm });
		const eflCase: string[] = [];
		const sourceCase: string[] = [];
		for (const p of rows) {
			const surf = surfacesOf.get(p.id) ?? [];
			const cols = paraxialColumns(
				opticsPartOf(p, surf),
				wavelengthNm,
				latest.get(p.id) ?? null
			);
			if (surf.length >= 2 && !latest.has(p.id) && cols.eflSource !== 'prescription') out.fellBack++;
			eflCase.push(`when ${p.id} then ${cols.paraxialEflMm === null ? 'NULL' : String(cols.paraxialEflMm)}`);
			sourceCase.push(`when ${p.id} then ${cols.eflSource === null ? 'NULL' : escape(cols.eflSource)}`);
		}
		// One statement per batch (ids and numbers are ours; the one text value is escaped).
		await tx.execute(
			sql.raw(
				`update \`parts\` set \`paraxial_efl_mm\` = case \`id\` ${eflCase.join(' ')} end, \`efl_source\` = case \`id\` ${sourceCase.join(' ')} end where \`id\` in (${ids.join(',')})`
			)
		);
		out.parts += rows.length;
	}
}

/** Sets the lab's default wavelength and recomputes every part's stored EFL at it, in one transaction. */
export async function setDefaultWavelength(db: DbOrTx, input: unknown, actor: { id: number }): Promise<RecomputeOutcome & { from: number; to: number }> {
	const { defaultWavelengthNm: to } = labSettingsSchema.parse(input);
	await syncLabMaterials(db);
	const run = async (tx: Tx | DbOrTx) => {
		const from = await getDefaultWavelengthNm(tx);
		await tx
			.insert(settings)
			.values({ key: 'defaultWavelengthNm', value: to })
			.onDuplicateKeyUpdate({ set: { value: to } });
		const outcome = await recomputeDerived(tx, to);
		await recordAudit(tx, { actorId: actor.id, action: 'settings.wavelength', targetType: 'settings', targetId: 'defaultWavelengthNm', detail: { from, to, parts: outcome.parts } });
		return { ...outcome, from, to };
	};
	// Inside a caller's transaction (tests roll theirs back) or in one of its own.
	return changeStock(db, run);
}

/** Counts for the settings page. */
export async function wavelengthSetting(db: DbOrTx) {
	const current = await getDefaultWavelengthNm(db);
	const [row] = await db.select({ value: settings.value }).from(settings).where(eq(settings.key, 'defaultWavelengthNm')).limit(1);
	return { defaultWavelengthNm: current, isSet: !!row };
}
