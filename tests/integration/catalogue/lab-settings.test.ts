/**
 * The lab's default wavelength (/admin/settings): changing it recomputes every part's stored EFL
 * at the new wavelength, in one transaction with the setting. The shared test database must keep
 * its setting (other files read EFLs at it), so the full change runs in a transaction that the
 * test rolls back, and the recomputation is checked on the test's own parts.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { count, eq, inArray } from 'drizzle-orm';
import { ZodError } from 'zod';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as parts from '../../../src/lib/server/catalogue/parts';
import { recomputeDerived, setDefaultWavelength } from '../../../src/lib/server/catalogue/lab-settings';
import { getDefaultWavelengthNm } from '../../../src/lib/server/catalogue/settings';
import { APP, cookieFor, cookieWithCode, twoStepAdmin, url } from '../accounts/helpers';

const { db, pool } = testDb();
const tag = `LS${Date.now().toString(36).toUpperCase()}`;
const created: number[] = [];
afterAll(async () => {
	if (created.length) await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, created));
	await pool.end();
});

/**
 * Fused silica, Sellmeier formula with λ in µm (I. H. Malitson, "Interspecimen comparison of the
 * refractive index of fused silica", J. Opt. Soc. Am. 55, 1205 (1965), eq. and table of
 * coefficients), written out here independently of the optics core.
 */
function nFusedSilica(nm: number): number {
	const l2 = (nm / 1000) ** 2;
	const terms: [number, number][] = [
		[0.6961663, 0.0684043],
		[0.4079426, 0.1162414],
		[0.8974794, 9.896161]
	];
	return Math.sqrt(1 + terms.reduce((s, [b, c]) => s + (b * l2) / (l2 - c * c), 0));
}

async function make(input: Record<string, unknown>) {
	const [{ id: actorId }] = await db.select({ id: t.users.id }).from(t.users).where(eq(t.users.role, 'stockroom')).limit(1);
	const { id } = await parts.createPart(db, { diameterMm: 25.4, kind: 'plano-convex', ...input }, { id: actorId });
	created.push(id);
	return id;
}
const stored = async (id: number, via: typeof db | Parameters<Parameters<typeof db.transaction>[0]>[0] = db) =>
	(await via.select({ efl: t.parts.paraxialEflMm, source: t.parts.eflSource }).from(t.parts).where(eq(t.parts.id, id)))[0];

describe('lab default wavelength', () => {
	it('recomputes stored EFLs at a new wavelength from the prescriptions (fused silica against Malitson 1965)', async () => {
		// A plano-convex lens with its flat side second: EFL = R / (n − 1) exactly, whatever its thickness (thick-lens
		// formula with 1/R2 = 0: E. Hecht, Optics, 5th ed. 2017, §6.2.1, eq. 6.2; from memory).
		const silica = await make({ sku: `${tag}-FS`, name: 'Silica plano-convex', surfaces: [{ radiusMm: 46, thicknessMm: 4, material: 'fused-silica' }, { radiusMm: null }] });
		const coded = await make({ sku: `${tag}-GC`, name: 'Crown plano-convex', surfaces: [{ radiusMm: 51.7, thicknessMm: 4, material: '517642' }, { radiusMm: null }] });
		const sheet = await make({ sku: `${tag}-BB`, name: 'Sealed module', kind: 'other', eflMm: 100 });
		const ids = [silica, coded, sheet];
		const before = await stored(coded);

		const out = await recomputeDerived(db, 1064, { partIds: ids });
		expect(out).toEqual({ parts: 3, fellBack: 0 });
		const fs = await stored(silica);
		expect(fs.source).toBe('prescription');
		expect(fs.efl).toBeCloseTo(46 / (nFusedSilica(1064) - 1), 5);
		// Normal dispersion: the index falls towards the infrared, so a positive lens gets longer (common practice, no source).
		const gc = await stored(coded);
		expect(gc.efl!).toBeGreaterThan(before.efl!);
		// A datasheet-only part has no dispersion model: its EFL stays as written.
		expect(await stored(sheet)).toEqual({ efl: 100, source: 'nominal' });

		// And back: the values at the d line again (the stored EFL is rounded to 1 nm, so they compare exactly).
		await recomputeDerived(db, 587.6, { partIds: ids });
		expect((await stored(silica)).efl).toBeCloseTo(46 / (nFusedSilica(587.6) - 1), 5);
		expect(await stored(coded)).toEqual(before);
	});

	it('changes the setting and every part in one transaction (rolled back here), and refuses wavelengths out of range', async () => {
		const silica = await make({ sku: `${tag}-FS2`, name: 'Silica plano-convex 2', surfaces: [{ radiusMm: 60, thicknessMm: 3, material: 'fused-silica' }, { radiusMm: null }] });
		const [{ id: adminId }] = await db.select({ id: t.users.id }).from(t.users).where(eq(t.users.role, 'admin')).limit(1);
		const lab = await getDefaultWavelengthNm(db);
		const [{ n: partCount }] = await db.select({ n: count() }).from(t.parts);
		class Undo extends Error {}
		const inside = await db
			.transaction(async (tx) => {
				const done = await setDefaultWavelength(tx, { defaultWavelengthNm: '632.8' }, { id: adminId });
				const seen = { done, wl: await getDefaultWavelengthNm(tx), part: await stored(silica, tx) };
				throw Object.assign(new Undo(), { seen });
			})
			.catch((e) => (e instanceof Undo ? (e as Undo & { seen: unknown }).seen : Promise.reject(e)));
		const seen = inside as { done: { from: number; to: number; parts: number }; wl: number; part: { efl: number | null } };
		expect(seen.done).toMatchObject({ from: lab, to: 632.8 });
		expect(seen.done.parts).toBeGreaterThanOrEqual(partCount);
		expect(seen.wl).toBe(632.8);
		expect(seen.part.efl).toBeCloseTo(60 / (nFusedSilica(632.8) - 1), 5);
		// Rolled back: the lab's setting and the part are as before.
		expect(await getDefaultWavelengthNm(db)).toBe(lab);
		expect((await stored(silica)).efl).toBeCloseTo(60 / (nFusedSilica(lab) - 1), 5);

		for (const bad of ['300', '1550', 'green', '']) {
			await expect(setDefaultWavelength(db, { defaultWavelengthNm: bad }, { id: adminId })).rejects.toBeInstanceOf(ZodError);
		}
		expect(await getDefaultWavelengthNm(db)).toBe(lab);
	});

	it('answers the settings form: a clear message for a bad value, 403 for other roles', async () => {
		const lab = await getDefaultWavelengthNm(db);
		// The admin pages need two-step sign-in: this file's own administrator has it (tests/support/two-step.ts).
		const admin = await cookieWithCode(await twoStepAdmin(db, 'lab-settings'));
		const post = async (cookie: string, value: string) => {
			const res = await fetch(url('/admin/settings?/wavelength'), {
				method: 'POST',
				headers: { cookie, origin: APP(), 'content-type': 'application/x-www-form-urlencoded', 'x-sveltekit-action': 'true', accept: 'application/json' },
				body: new URLSearchParams({ defaultWavelengthNm: value }).toString()
			});
			return { status: res.status, body: await res.json() };
		};
		const bad = await post(admin, '2000');
		expect(bad.body).toMatchObject({ type: 'failure', status: 400 });
		expect(bad.body.data).toMatch(/Between 365 and 1100 nm/);
		const engineer = await post(await cookieFor('engineer@tarnwell.example'), '632.8');
		expect(engineer.status === 403 || engineer.body?.status === 403).toBe(true);
		expect(await getDefaultWavelengthNm(db)).toBe(lab);
		const page = await fetch(url('/admin/settings'), { headers: { cookie: admin } });
		expect(await page.text()).toContain(`${lab} nm`);
	});
});
