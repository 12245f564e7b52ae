import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, inArray, isNull, sql } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as parts from '../../../src/lib/server/catalogue/parts';
import * as ops from '../../../src/lib/server/stock/operations';
import * as res from '../../../src/lib/server/stock/reservations';
import { totalsOf } from '../../../src/lib/server/stock/availability';
import { currentStockVersion } from '../../../src/lib/server/stock/version';
import { DomainError } from '../../../src/lib/server/errors';

// 20 connections so that the parallel requests really run side by side.
const { db, pool } = testDb();
const wide = (await import('../../../src/lib/server/db/client')).createDb(process.env.DATABASE_URL!, 20);
const tag = `ST${Date.now().toString(36).toUpperCase()}`;
const created: number[] = [];
let stockroom = 0;
let engineer = 0;
let engineer2 = 0;
let locA = 0;
let locB = 0;

afterAll(async () => {
	if (created.length) await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, created));
	await pool.end();
	await wide.pool.end();
});

beforeAll(async () => {
	const us = await db.select({ id: t.users.id, role: t.users.role }).from(t.users).orderBy(t.users.id);
	stockroom = us.find((u) => u.role === 'stockroom')!.id;
	const engineers = us.filter((u) => u.role === 'engineer');
	engineer = engineers[0].id;
	engineer2 = engineers[1]?.id ?? us.find((u) => u.role === 'admin')!.id;
	const locs = await db.select().from(t.locations).where(isNull(t.locations.archivedAt)).orderBy(t.locations.code);
	locA = locs[0].id;
	locB = locs[1].id;
});

async function newPart(suffix: string) {
	const { id } = await parts.createPart(
		db,
		{ sku: `${tag}-${suffix}`, name: `Stock test ${suffix}`, kind: 'other', diameterMm: 25, eflMm: 100 },
		{ id: stockroom }
	);
	created.push(id);
	return id;
}

/** Ledger sum (to − from) per bucket of one part, compared with the stock table. */
async function ledgerMatchesStock(partId: number) {
	const [rows] = await db.execute(sql`
		select b.location_id, b.cond, b.ledger, coalesce(s.quantity, 0) as stock from (
			select location_id, cond, sum(q) as ledger from (
				select to_location_id as location_id, to_condition as cond, quantity as q from movements where part_id = ${partId} and to_location_id is not null
				union all
				select from_location_id, from_condition, -quantity from movements where part_id = ${partId} and from_location_id is not null
			) m group by location_id, cond
		) b left join stock s on s.part_id = ${partId} and s.location_id = b.location_id and s.\`condition\` = b.cond`);
	const list = rows as unknown as { ledger: string; stock: number }[];
	const stockRows = await db.select().from(t.stock).where(eq(t.stock.partId, partId));
	// every non-empty stock bucket appears in the ledger, and each ledger bucket sums to its stock row
	for (const s of stockRows) if (s.quantity > 0) expect(list.some((r) => Number(r.stock) === s.quantity)).toBe(true);
	for (const r of list) expect(Number(r.ledger)).toBe(Number(r.stock));
	return list;
}

describe('stock operations', () => {
	it('50 parallel issues of 1 unit against a stock of 10: exactly 10 succeed', async () => {
		const partId = await newPart('CONC');
		await ops.receive(db, { partId, quantity: 10, locationId: locA }, { id: stockroom });
		const results = await Promise.allSettled(
			Array.from({ length: 50 }, () => ops.issue(wide.db, { partId, quantity: 1, locationId: locA, issuedTo: 'bench 2' }, { id: engineer }))
		);
		const ok = results.filter((r) => r.status === 'fulfilled');
		const failed = results.filter((r): r is PromiseRejectedResult => r.status === 'rejected');
		expect(ok).toHaveLength(10);
		expect(failed).toHaveLength(40);
		for (const f of failed) {
			expect(f.reason).toBeInstanceOf(DomainError);
			expect(f.reason.status).toBe(409);
			expect(f.reason.code).toBe('insufficient-stock');
			expect(f.reason.message).toMatch(/Not enough/);
		}
		const [row] = await db.select().from(t.stock).where(eq(t.stock.partId, partId));
		expect(row.quantity).toBe(0);
		const issues = await db.select().from(t.movements).where(eq(t.movements.partId, partId));
		expect(issues.filter((m) => m.kind === 'issue')).toHaveLength(10);
		await ledgerMatchesStock(partId);
	});

	it('keeps the ledger equal to the stock after a random sequence of operations', async () => {
		const partId = await newPart('RAND');
		let seed = 12345;
		const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31);
		const pick = <T,>(xs: T[]) => xs[Math.floor(rnd() * xs.length)];
		const conds = ['usable', 'quarantine', 'damaged'] as const;
		let okCount = 0;
		let refused = 0;
		const expected = new Map<string, number>();
		const bump = (loc: number, c: string, n: number) => expected.set(`${loc}/${c}`, (expected.get(`${loc}/${c}`) ?? 0) + n);
		for (let i = 0; i < 120; i++) {
			const loc = pick([locA, locB]);
			const other = loc === locA ? locB : locA;
			const n = 1 + Math.floor(rnd() * 4);
			const c = pick([...conds]);
			const kind = pick(['receive', 'move', 'issue', 'return', 'adjust', 'scrap', 'condition'] as const);
			try {
				if (kind === 'receive') (await ops.receive(db, { partId, quantity: n, locationId: loc, condition: c }, { id: stockroom }), bump(loc, c, n));
				if (kind === 'move') (await ops.move(db, { partId, quantity: n, fromLocationId: loc, toLocationId: other, condition: c }, { id: stockroom }), bump(loc, c, -n), bump(other, c, n));
				if (kind === 'issue') (await ops.issue(db, { partId, quantity: n, locationId: loc }, { id: engineer }), bump(loc, 'usable', -n));
				if (kind === 'return') (await ops.returnStock(db, { partId, quantity: n, locationId: loc, condition: c }, { id: engineer }), bump(loc, c, n));
				if (kind === 'adjust') {
					const delta = rnd() < 0.5 ? -n : n;
					await ops.adjust(db, { partId, locationId: loc, condition: c, delta, reason: 'cycle count' }, { id: stockroom });
					bump(loc, c, delta);
				}
				if (kind === 'scrap') (await ops.scrap(db, { partId, quantity: n, locationId: loc, condition: c }, { id: stockroom }), bump(loc, c, -n));
				if (kind === 'condition') {
					const to = pick(conds.filter((x) => x !== c));
					await ops.changeCondition(db, { partId, quantity: n, locationId: loc, from: c, to }, { id: stockroom });
					bump(loc, c, -n);
					bump(loc, to, n);
				}
				okCount++;
			} catch (e) {
				expect((e as DomainError).code).toBe('insufficient-stock');
				refused++;
			}
		}
		expect(okCount).toBeGreaterThan(40);
		expect(refused).toBeGreaterThan(5);
		const rows = await db.select().from(t.stock).where(eq(t.stock.partId, partId));
		for (const [key, q] of expected) {
			const [loc, c] = key.split('/');
			expect(rows.find((r) => r.locationId === Number(loc) && r.condition === c)?.quantity ?? 0).toBe(q);
		}
		await ledgerMatchesStock(partId);
	});

	it('writes nothing when an operation is refused', async () => {
		const partId = await newPart('NOOP');
		await ops.receive(db, { partId, quantity: 2, locationId: locA }, { id: stockroom });
		const before = await db.select().from(t.movements).where(eq(t.movements.partId, partId));
		const v = await currentStockVersion(db);
		await expect(ops.scrap(db, { partId, quantity: 3, locationId: locA, condition: 'usable' }, { id: stockroom })).rejects.toMatchObject({ status: 409 });
		await expect(ops.move(db, { partId, quantity: 1, fromLocationId: locA, toLocationId: locA }, { id: stockroom })).rejects.toThrow();
		expect(await db.select().from(t.movements).where(eq(t.movements.partId, partId))).toHaveLength(before.length);
		expect(await currentStockVersion(db)).toBe(v);
	});

	it('takes back only units that went out: a return beyond the issued units is refused and writes nothing', async () => {
		const partId = await newPart('RET');
		await ops.receive(db, { partId, quantity: 5, locationId: locA }, { id: stockroom });
		await expect(ops.returnStock(db, { partId, quantity: 1, locationId: locA }, { id: engineer })).rejects.toMatchObject({
			status: 409,
			message: expect.stringMatching(/No unit of this part is out/)
		});
		await ops.issue(db, { partId, quantity: 2, locationId: locA, issuedTo: 'bench 3' }, { id: engineer });
		await ops.returnStock(db, { partId, quantity: 1, locationId: locB }, { id: engineer });
		const before = await db.select().from(t.movements).where(eq(t.movements.partId, partId));
		await expect(ops.returnStock(db, { partId, quantity: 50, locationId: locA }, { id: engineer })).rejects.toMatchObject({
			status: 409,
			message: expect.stringMatching(/Only 1 unit is out .* at most 1 can come back/)
		});
		expect(await db.select().from(t.movements).where(eq(t.movements.partId, partId))).toHaveLength(before.length);
		await ops.returnStock(db, { partId, quantity: 1, locationId: locA, condition: 'damaged' }, { id: engineer });
		expect(await totalsOf(db, partId)).toMatchObject({ onHand: 4, damaged: 1 }); // 5 − 2 issued + 1 back usable; 1 back damaged
		await ledgerMatchesStock(partId);
	});

	it('counts reservations until they expire, and an issue does not take units reserved by others', async () => {
		const partId = await newPart('RES');
		await ops.receive(db, { partId, quantity: 5, locationId: locA }, { id: stockroom });
		const until = new Date(Date.now() + 7 * 86_400_000);
		const r = await db.transaction((tx) => res.reserve(tx, { partId, quantity: 3, until, userId: engineer }));
		expect(r.state).toBe('active');
		expect(await totalsOf(db, partId)).toMatchObject({ onHand: 5, reserved: 3, available: 2 });
		// a second engineer may not reserve beyond what is available
		await expect(db.transaction((tx) => res.reserve(tx, { partId, quantity: 3, until, userId: engineer2 }))).rejects.toMatchObject({
			status: 409,
			code: 'insufficient-stock'
		});
		// ... nor issue into the first engineer's units
		await expect(ops.issue(db, { partId, quantity: 3, locationId: locA }, { id: engineer2 })).rejects.toMatchObject({ code: 'insufficient-stock' });
		await ops.issue(db, { partId, quantity: 2, locationId: locA }, { id: engineer2 });
		// the owner may issue the reserved units: the reservation is fulfilled
		const m = await ops.issue(db, { partId, quantity: 3, locationId: locA }, { id: engineer });
		expect(m.refs).toEqual({ reservations: [r.id] });
		const [after] = await res.reservationRows(db, { id: r.id });
		expect(after.status).toBe('fulfilled');
		expect(await totalsOf(db, partId)).toMatchObject({ onHand: 0, reserved: 0, available: 0 });
		// an expired reservation stops counting
		await ops.returnStock(db, { partId, quantity: 2, locationId: locA }, { id: engineer });
		const r2 = await db.transaction((tx) => res.reserve(tx, { partId, quantity: 2, until, userId: engineer }));
		expect((await totalsOf(db, partId)).available).toBe(0);
		await db.update(t.reservations).set({ until: new Date(Date.now() - 1000) }).where(eq(t.reservations.id, r2.id));
		expect(await totalsOf(db, partId)).toMatchObject({ onHand: 2, reserved: 0, available: 2 });
		expect((await res.reservationRows(db, { id: r2.id }))[0].state).toBe('expired');
	});

	it('lets only the owner or the stockroom release a reservation', async () => {
		const partId = await newPart('REL');
		await ops.receive(db, { partId, quantity: 2, locationId: locA }, { id: stockroom });
		const r = await res.createReservation(db, { partId, quantity: 1, until: new Date(Date.now() + 86_400_000).toISOString() }, { id: engineer });
		await expect(res.releaseReservation(db, r.id, { id: engineer2, role: 'engineer' })).rejects.toMatchObject({ status: 404 });
		await expect(res.releaseReservation(db, r.id, { id: engineer, role: 'engineer' })).resolves.toMatchObject({ status: 'released' });
		await expect(res.releaseReservation(db, r.id, { id: engineer, role: 'engineer' })).rejects.toMatchObject({ status: 409 });
		expect((await totalsOf(db, partId)).available).toBe(2);
	});
});
