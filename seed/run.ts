/**
 * Seeds the demo scenario into an empty database (no users yet). Safe to run twice: it does nothing
 * when the database already has users. Only for the local demo: refuses when NODE_ENV=production.
 * Usage: DATABASE_URL=... DEMO_PASSWORD=... AUTH_PEPPER=... tsx seed/run.ts
 */
import { count, eq } from 'drizzle-orm';
import { createDb, type Db } from '../src/lib/server/db/client';
import * as t from '../src/lib/server/db/schema';
import { hashPassword } from '../src/lib/server/auth/password';
import { paraxialColumns } from '../src/lib/server/catalogue/derived';
import { parseCoatingBand } from '../src/lib/coating';
import {
	DEMO_LOCATIONS,
	DEMO_MATERIALS,
	DEMO_PROJECTS,
	DEMO_SUPPLIERS,
	DEMO_USERS,
	demoParts,
	drawerFor,
	prng
} from './demo-data';

/** The coating band of a demo part, read from its coating text as the part service does. */
function coatingColumns(coating: string | null) {
	const r = parseCoatingBand(coating);
	const band = r.ok ? r.band : null;
	return { coatingMinNm: band?.minNm ?? null, coatingMaxNm: band?.maxNm ?? null };
}

export const DEFAULT_DEMO_PASSWORD = 'tarnwell-bench-2026';
const DEFAULT_WAVELENGTH_NM = 587.6;

export async function seedDemo(db: Db, opts: { password: string; pepper?: string }) {
	const [{ n }] = await db.select({ n: count() }).from(t.users);
	if (n > 0) return { seeded: false };
	const rnd = prng(7);
	const now = new Date();
	const daysAgo = (d: number) => new Date(now.getTime() - d * 86_400_000);

	await db.transaction(async (tx) => {
		await tx.insert(t.settings).values([
			{ key: 'defaultWavelengthNm', value: DEFAULT_WAVELENGTH_NM },
			{ key: 'labName', value: 'Tarnwell Institute imaging lab' }
		]);
		await tx.insert(t.stockVersion).values({ id: 1, version: 1 });
		await tx.insert(t.materials).values(DEMO_MATERIALS.map((m) => ({ ...m })));
		const supplierIds = new Map<string, number>();
		for (const s of DEMO_SUPPLIERS) {
			const [{ id }] = await tx.insert(t.suppliers).values({ name: s.name, contactEmail: s.contactEmail }).$returningId();
			supplierIds.set(s.name, id);
		}
		const userIds = new Map<string, number>();
		for (const u of DEMO_USERS) {
			const passwordHash = await hashPassword(opts.password, opts.pepper);
			const [{ id }] = await tx.insert(t.users).values({ ...u, passwordHash }).$returningId();
			userIds.set(u.role === 'engineer' && userIds.has('engineer') ? 'engineer2' : u.role, id);
		}
		const stockroomId = userIds.get('stockroom')!;
		const locationIds = new Map<string, number>();
		for (const l of DEMO_LOCATIONS) {
			const [{ id }] = await tx.insert(t.locations).values({ ...l }).$returningId();
			locationIds.set(l.code, id);
		}
		for (const p of DEMO_PROJECTS) {
			await tx.insert(t.projects).values({ ...p, ownerId: userIds.get('engineer') });
		}

		for (const p of demoParts()) {
			const first = p.surfaces[0]?.materialCode ?? null;
			const [{ id: partId }] = await tx
				.insert(t.parts)
				.values({
					sku: p.sku,
					name: p.name,
					kind: p.kind,
					diameterMm: p.diameterMm,
					eflMm: p.eflMm,
					bflMm: p.bflMm,
					centerThicknessMm: p.centerThicknessMm,
					designWavelengthNm: p.designWavelengthNm,
					paraxialEflMm: p.eflMm,
					eflSource: 'nominal',
					primaryMaterial: first,
					coating: p.coating,
					...coatingColumns(p.coating),
					supplierId: supplierIds.get(p.supplier),
					supplierPartNumber: p.supplierPartNumber,
					unitPriceMinor: p.unitPriceMinor,
					currency: 'EUR',
					leadTimeDays: p.leadTimeDays,
					reorderPoint: p.reorderPoint,
					reorderQuantity: p.reorderQuantity
				})
				.$returningId();
			if (p.surfaces.length) {
				await tx.insert(t.partSurfaces).values(
					p.surfaces.map((s, i) => ({
						partId,
						position: i,
						radiusMm: s.radiusMm,
						thicknessMm: s.thicknessMm ?? null,
						materialCode: s.materialCode ?? null
					}))
				);
			}
			// Stock: received some weeks ago into its drawer; a few units sit in quarantine.
			const drawer = locationIds.get(drawerFor(p))!;
			const qty = Math.floor(rnd() * 7); // 0..6, so some parts are out of stock
			if (qty > 0) {
				await receive(tx, { partId, locationId: drawer, quantity: qty, userId: stockroomId, at: daysAgo(40 + Math.floor(rnd() * 200)) });
			}
			if (rnd() < 0.12) {
				await receive(tx, {
					partId,
					locationId: locationIds.get('QC-SHELF')!,
					quantity: 1,
					userId: stockroomId,
					at: daysAgo(3),
					condition: 'quarantine',
					note: 'Incoming inspection: coating check pending'
				});
			}
			// Measured EFLs at the HeNe line for some of the most used lenses.
			let measured: { eflMm: number; wavelengthNm: number } | null = null;
			if (p.kind !== 'other' && rnd() < 0.15) {
				const deviation = 1 + (rnd() - 0.5) * 0.012;
				measured = { eflMm: Number((p.eflMm * deviation).toFixed(3)), wavelengthNm: 632.8 };
				await tx.insert(t.measurements).values({
					partId,
					eflMm: measured.eflMm,
					wavelengthNm: measured.wavelengthNm,
					uncertaintyMm: Number((Math.abs(p.eflMm) * 0.002).toFixed(3)),
					method: 'Nodal slide on bench 3',
					measuredAt: daysAgo(10 + Math.floor(rnd() * 60)),
					measuredBy: stockroomId
				});
			}
			// The catalogue sorts and filters on the EFL at the default wavelength, computed by the optics core
			// from the prescription (or the latest measurement, rescaled; datasheet numbers for black boxes).
			await tx
				.update(t.parts)
				.set(
					paraxialColumns(
						{
							surfaces: p.surfaces.map((s, i) =>
								i === p.surfaces.length - 1 ? { radiusMm: s.radiusMm } : { radiusMm: s.radiusMm, thicknessMm: s.thicknessMm ?? 0, material: s.materialCode ?? null }
							),
							eflMm: p.eflMm,
							bflMm: p.bflMm,
							centerThicknessMm: p.centerThicknessMm,
							designWavelengthNm: p.designWavelengthNm,
							diameterMm: p.diameterMm,
							clearApertureMm: null,
							primaryMaterial: first
						},
						DEFAULT_WAVELENGTH_NM,
						measured
					)
				)
				.where(eq(t.parts.id, partId));
		}
	});
	return { seeded: true };
}

async function receive(
	tx: Parameters<Parameters<Db['transaction']>[0]>[0],
	m: { partId: number; locationId: number; quantity: number; userId: number; at: Date; condition?: t.Condition; note?: string }
) {
	const condition = m.condition ?? 'usable';
	await tx.insert(t.stock).values({ partId: m.partId, locationId: m.locationId, condition, quantity: m.quantity });
	await tx.insert(t.movements).values({
		kind: 'receive',
		partId: m.partId,
		quantity: m.quantity,
		toLocationId: m.locationId,
		toCondition: condition,
		userId: m.userId,
		note: m.note ?? 'Opening stock count',
		at: m.at
	});
}

if (import.meta.url === `file://${process.argv[1]}`) {
	if (process.env.NODE_ENV === 'production') {
		console.error('Refusing to seed demo accounts with NODE_ENV=production.');
		process.exit(1);
	}
	const url = process.env.DATABASE_URL;
	if (!url) {
		console.error('DATABASE_URL is not set');
		process.exit(1);
	}
	const { db, pool } = createDb(url, 2);
	const result = await seedDemo(db, {
		password: process.env.DEMO_PASSWORD || DEFAULT_DEMO_PASSWORD,
		pepper: process.env.AUTH_PEPPER
	});
	console.log(result.seeded ? 'demo data seeded' : 'database already has users: demo seed skipped');
	await pool.end();
}
