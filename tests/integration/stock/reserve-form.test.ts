/**
 * Small things of issue 16 on the part page's forms: after reserving, the form keeps the project (and
 * date) chosen, so the next reservation for the same project needs no second pick.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as parts from '../../../src/lib/server/catalogue/parts';
import * as ops from '../../../src/lib/server/stock/operations';
import { APP, cookieFor, url } from '../accounts/helpers';

const { db, pool } = testDb();
const tag = `RF${Date.now().toString(36).toUpperCase()}`;
let partId = 0;
let projectId = 0;

beforeAll(async () => {
	const [u] = await db.select().from(t.users).where(eq(t.users.email, 'stockroom@tarnwell.example'));
	({ id: partId } = await parts.createPart(db, { sku: tag, name: 'Reserve form test', kind: 'other', diameterMm: 25, eflMm: 60 }, { id: u.id }));
	const [loc] = await db.select().from(t.locations).limit(1);
	await ops.receive(db, { partId, quantity: 3, locationId: loc.id }, { id: u.id });
	[{ id: projectId }] = await db.select({ id: t.projects.id }).from(t.projects).limit(1);
});
afterAll(async () => {
	await db.update(t.reservations).set({ status: 'released' }).where(eq(t.reservations.partId, partId));
	await db.update(t.parts).set({ archivedAt: new Date() }).where(eq(t.parts.id, partId));
	await pool.end();
});

describe('the reserve form', () => {
	it('keeps the project after a successful reservation', async () => {
		const cookie = await cookieFor('engineer@tarnwell.example');
		const until = new Date(Date.now() + 5 * 86_400_000).toISOString().slice(0, 10);
		const body = new URLSearchParams({ quantity: '1', until, projectId: String(projectId) });
		const res = await fetch(url(`/parts/${partId}?/reserve`), {
			method: 'POST',
			headers: { cookie, origin: APP(), 'content-type': 'application/x-www-form-urlencoded', 'x-sveltekit-action': 'true', accept: 'application/json' },
			body
		});
		expect(res.status).toBe(200);
		const out = await res.json();
		expect(out.type).toBe('success');
		// the action's data (devalue): the op succeeded and the values keep the project and the date
		expect(out.data).toContain('"reserve"');
		expect(out.data).toContain('"projectId"');
		expect(out.data).toContain(`"${projectId}"`);
		expect(out.data).toContain(`"${until}"`);
		const held = await db.select().from(t.reservations).where(eq(t.reservations.partId, partId));
		expect(held.map((r) => r.projectId)).toEqual([projectId]);
	});
});
