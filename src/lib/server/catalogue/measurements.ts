/**
 * Measured EFLs of parts. Every measurement is kept (history); the latest one by
 * `measuredAt` is what the catalogue and the solver use, rescaled to the working wavelength
 * (see derived.ts). Recording one refreshes the part's derived EFL in the same transaction.
 */
import { desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { dateInput, text } from '$lib/input';
import type { DbOrTx } from '$lib/server/db';
import { measurements, parts, users } from '$lib/server/db/schema';
import { changeStock } from '$lib/server/stock/version';
import { recordAudit } from '$lib/server/audit';
import { DomainError } from '$lib/server/errors';
import { PartNotFound, refreshDerived, type Actor } from './parts';

export const measurementInputSchema = z
	.object({
		eflMm: z.number({ error: 'Enter the measured EFL in mm.' }).refine((v) => v !== 0 && Math.abs(v) <= 1e6, 'Enter a non-zero EFL in mm.'),
		wavelengthNm: z.number({ error: 'Enter the wavelength in nm.' }).min(200, 'Between 200 and 20000 nm.').max(20000, 'Between 200 and 20000 nm.'),
		uncertaintyMm: z.number().min(0, 'The uncertainty cannot be negative.').max(1e4).nullable().optional(),
		method: text().trim().max(120, 'At most 120 characters.').nullable().optional(),
		/** ISO date or date-time; defaults to now. Not in the future. */
		measuredAt: dateInput('Enter a real date, e.g. 2026-03-01 (or leave it out for now).')
			.refine((d) => d.getTime() <= Date.now() + 60_000, 'The date cannot lie in the future.')
			.optional(),
		note: text().trim().max(2000).nullable().optional()
	})
	.strict();
export type MeasurementInput = z.infer<typeof measurementInputSchema>;

/** Records a measurement by `actor`; returns it. Throws ZodError, 404, or 409 when the part is archived. */
export async function recordMeasurement(db: DbOrTx, partId: number, input: unknown, actor: Actor) {
	const data = measurementInputSchema.parse(input);
	return changeStock(db, async (tx) => {
		const [part] = await tx.select({ id: parts.id, eflMm: parts.paraxialEflMm, archivedAt: parts.archivedAt }).from(parts).where(eq(parts.id, partId)).for('update');
		if (!part) throw new PartNotFound(partId);
		if (part.eflMm !== null && Math.sign(part.eflMm) !== Math.sign(data.eflMm)) {
			const message = `The part's EFL is ${part.eflMm > 0 ? 'positive' : 'negative'}: a measurement of the opposite sign cannot be right.`;
			throw new DomainError(400, 'invalid-input', message, { eflMm: message });
		}
		const [{ id }] = await tx
			.insert(measurements)
			.values({
				partId,
				eflMm: data.eflMm,
				wavelengthNm: data.wavelengthNm,
				uncertaintyMm: data.uncertaintyMm ?? null,
				method: data.method || null,
				measuredAt: data.measuredAt ?? new Date(),
				measuredBy: actor.id,
				note: data.note || null
			})
			.$returningId();
		await refreshDerived(tx, partId);
		await recordAudit(tx, { actorId: actor.id, action: 'measurement.create', targetType: 'part', targetId: partId, detail: { measurementId: id } });
		const [row] = await tx.select().from(measurements).where(eq(measurements.id, id));
		return toMeasurementJson({ ...row, measuredByName: null });
	});
}

/** All measurements of a part, newest first, with who measured. */
export async function listMeasurements(db: DbOrTx, partId: number) {
	const rows = await db
		.select({ m: measurements, measuredByName: users.name })
		.from(measurements)
		.leftJoin(users, eq(users.id, measurements.measuredBy))
		.where(eq(measurements.partId, partId))
		.orderBy(desc(measurements.measuredAt), desc(measurements.id));
	return rows.map((r) => toMeasurementJson({ ...r.m, measuredByName: r.measuredByName }));
}

export function toMeasurementJson(m: typeof measurements.$inferSelect & { measuredByName: string | null }) {
	return {
		id: m.id,
		partId: m.partId,
		eflMm: m.eflMm,
		wavelengthNm: m.wavelengthNm,
		uncertaintyMm: m.uncertaintyMm,
		method: m.method,
		measuredAt: m.measuredAt.toISOString(),
		measuredBy: m.measuredBy,
		measuredByName: m.measuredByName,
		note: m.note
	};
}
