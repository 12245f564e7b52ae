import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, inArray, sql } from 'drizzle-orm';
import Papa from 'papaparse';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as ops from '../../../src/lib/server/stock/operations';
import * as res from '../../../src/lib/server/stock/reservations';
import * as requests from '../../../src/lib/server/purchasing/requests';
import { totalsOf } from '../../../src/lib/server/stock/availability';
import { parseOrderCsv } from '../../../src/lib/server/purchasing/csv';
import { DomainError } from '../../../src/lib/server/errors';
import { api, cookieFor } from '../accounts/helpers';
import { lastOutboxId, newPart, people, waitForMentions } from './helpers';

const { db, pool } = testDb();
const tag = `PR${Date.now().toString(36).toUpperCase()}`;
const created: number[] = [];
let who: Awaited<ReturnType<typeof people>>;
let purchaser: { id: number; role: t.Role };
let loc = 0;

beforeAll(async () => {
	who = await people(db);
	purchaser = { id: who.purchaser.id, role: 'purchaser' };
	loc = who.locations[2].id;
});
afterAll(async () => {
	if (created.length) await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, created));
	await pool.end();
});

async function part(suffix: string, over: Record<string, unknown> = {}) {
	const id = await newPart(db, who.stockroom.id, `${tag}-${suffix}`, over);
	created.push(id);
	return id;
}

async function expectDomain(p: Promise<unknown>, status: number, code?: string) {
	const err = await p.then(
		() => null,
		(e) => e
	);
	expect(err, 'expected a failure').toBeInstanceOf(DomainError);
	expect(err.status).toBe(status);
	if (code) expect(err.code).toBe(code);
}

/** Ledger sum (to − from) per bucket of one part equals the stock table (the ledger invariant of DESIGN.md). */
async function ledgerMatchesStock(partId: number) {
	const [rows] = await db.execute(sql`
		select b.location_id, b.cond, b.ledger, coalesce(s.quantity, 0) as stock from (
			select location_id, cond, sum(q) as ledger from (
				select to_location_id as location_id, to_condition as cond, quantity as q from movements where part_id = ${partId} and to_location_id is not null
				union all
				select from_location_id, from_condition, -quantity from movements where part_id = ${partId} and from_location_id is not null
			) m group by location_id, cond
		) b left join stock s on s.part_id = ${partId} and s.location_id = b.location_id and s.\`condition\` = b.cond`);
	for (const r of rows as unknown as { ledger: string; stock: number }[]) expect(Number(r.ledger)).toBe(Number(r.stock));
	const stockRows = await db.select().from(t.stock).where(eq(t.stock.partId, partId));
	const ledgerTotal = (rows as unknown as { ledger: string }[]).reduce((a, r) => a + Number(r.ledger), 0);
	expect(ledgerTotal).toBe(stockRows.reduce((a, s) => a + s.quantity, 0));
}

describe('request state machine against the database', () => {
	it('rejects illegal steps with 409 and keeps the request unchanged', async () => {
		const partId = await part('SM');
		const id = await requests.createRequest(db, { partId, quantity: 3 }, purchaser);
		const step = (status: string) => requests.patchRequest(db, id, { status }, purchaser);
		await expectDomain(step('ordered'), 409, 'illegal-transition'); // draft → ordered skips requested
		await expectDomain(step('received'), 409, 'illegal-transition');
		await expectDomain(step('closed'), 409, 'illegal-transition');
		await expectDomain(requests.patchRequest(db, id, { receive: { quantity: 1, locationId: loc } }, purchaser), 409, 'illegal-transition');
		expect((await requests.getRequest(db, id)).status).toBe('draft');
		await step('requested');
		await step('ordered');
		await expectDomain(step('requested'), 409, 'illegal-transition'); // no way back once ordered
		await expectDomain(requests.patchRequest(db, id, { quantity: 5 }, purchaser), 409, 'not-editable');
		await step('cancelled');
		for (const s of ['draft', 'requested', 'ordered', 'closed']) await expectDomain(step(s), 409, 'illegal-transition');
		const r = await requests.getRequest(db, id);
		expect(r.status).toBe('cancelled');
		expect(r.events.map((e) => [e.from, e.to, e.userId])).toEqual([
			[null, 'draft', who.purchaser.id],
			['draft', 'requested', who.purchaser.id],
			['requested', 'ordered', who.purchaser.id],
			['ordered', 'cancelled', who.purchaser.id]
		]);
	});

	it('engineers may not create requests; the stockroom may receive but not step', async () => {
		const partId = await part('RO');
		await expectDomain(requests.createRequest(db, { partId, quantity: 1 }, { id: who.engineer.id, role: 'engineer' }), 403);
		const id = await requests.createRequest(db, { partId, quantity: 1, status: 'requested' }, purchaser);
		await expectDomain(requests.patchRequest(db, id, { status: 'ordered' }, { id: who.stockroom.id, role: 'stockroom' }), 403);
		await requests.patchRequest(db, id, { status: 'ordered' }, purchaser);
		const r = await requests.patchRequest(db, id, { receive: { quantity: 1, locationId: loc } }, { id: who.stockroom.id, role: 'stockroom' });
		expect(r.status).toBe('received');
	});
});

describe('receiving against a request', () => {
	it('writes one receive movement per receipt, partly then fully, and the ledger still sums to the stock', async () => {
		const partId = await part('RX');
		const id = await requests.createRequest(db, { partId, quantity: 5, status: 'requested' }, purchaser);
		await requests.patchRequest(db, id, { status: 'ordered', orderReference: 'QG-7781' }, purchaser);
		const before = await totalsOf(db, partId);

		const r1 = await requests.patchRequest(db, id, { receive: { quantity: 2, locationId: loc }, note: 'first box' }, purchaser);
		expect(r1.status).toBe('partly-received');
		await expectDomain(requests.patchRequest(db, id, { receive: { quantity: 4, locationId: loc } }, purchaser), 400); // only 3 remain
		const r2 = await requests.patchRequest(db, id, { receive: { quantity: 3, locationId: loc } }, purchaser);
		expect(r2.status).toBe('received');
		await expectDomain(requests.patchRequest(db, id, { receive: { quantity: 1, locationId: loc } }, purchaser), 409);

		const after = await totalsOf(db, partId);
		expect(after.onHand - before.onHand).toBe(5);
		const moves = await db.select().from(t.movements).where(eq(t.movements.partId, partId));
		const receipts = moves.filter((m) => m.kind === 'receive');
		expect(receipts.map((m) => m.quantity).sort()).toEqual([2, 3]);
		expect(receipts.every((m) => m.userId === who.purchaser.id && m.toLocationId === loc && m.note?.startsWith(`Purchase request ${id}`))).toBe(true);
		const req = await requests.getRequest(db, id);
		expect(req.receivedQuantity).toBe(5);
		const receiptEvents = req.events.filter((e) => e.movementId);
		expect(receiptEvents.map((e) => e.movementId).sort()).toEqual(receipts.map((m) => m.id).sort());
		expect(receiptEvents.map((e) => [e.from, e.to, e.quantity])).toEqual([
			['ordered', 'partly-received', 2],
			['partly-received', 'received', 3]
		]);
		await ledgerMatchesStock(partId);
		await requests.patchRequest(db, id, { status: 'closed' }, purchaser);
		expect((await requests.getRequest(db, id)).status).toBe('closed');
	});

	it('a receipt that fails in the stock service leaves the request, the ledger and the stock untouched', async () => {
		const partId = await part('RB');
		const id = await requests.createRequest(db, { partId, quantity: 2, status: 'requested' }, purchaser);
		await requests.patchRequest(db, id, { status: 'ordered' }, purchaser);
		const [{ id: archivedLoc }] = await db
			.insert(t.locations)
			.values({ code: `${tag}-OLD`, name: 'Archived drawer', archivedAt: new Date() })
			.$returningId();
		await expectDomain(requests.patchRequest(db, id, { receive: { quantity: 2, locationId: archivedLoc } }, purchaser), 409, 'location-archived');
		const req = await requests.getRequest(db, id);
		expect(req.status).toBe('ordered');
		expect(req.receivedQuantity).toBe(0);
		expect(req.events.some((e) => e.movementId)).toBe(false);
		expect(await db.select().from(t.movements).where(eq(t.movements.partId, partId))).toHaveLength(0);
		expect((await totalsOf(db, partId)).onHand).toBe(0);
	});
});

describe('purchasing API', () => {
	let cookie = '';
	beforeAll(async () => {
		cookie = await cookieFor('purchaser@tarnwell.example');
	});

	it('creates requests in one call, steps them, rejects illegal steps with 409 and bad input with 400', async () => {
		const a = await part('API1');
		const b = await part('API2');
		const created = await api('POST', '/api/v1/purchase-requests', { cookie }, { items: [{ partId: a, quantity: 2, status: 'requested' }, { partId: b, quantity: 1 }] });
		expect(created.status).toBe(201);
		const { items } = await created.json();
		expect(items.map((i: { sku: string; status: string }) => [i.sku, i.status]).sort()).toEqual([
			[`${tag}-API1`, 'requested'],
			[`${tag}-API2`, 'draft']
		]);
		const draft = items.find((i: { partId: number }) => i.partId === b);
		const bad = await api('PATCH', `/api/v1/purchase-requests/${draft.id}`, { cookie }, { status: 'ordered' });
		expect(bad.status).toBe(409);
		expect((await bad.json()).error.code).toBe('illegal-transition');
		expect((await api('PATCH', `/api/v1/purchase-requests/${draft.id}`, { cookie }, { status: 'shipped' })).status).toBe(400);
		expect((await api('PATCH', `/api/v1/purchase-requests/${draft.id}`, { cookie }, { owner: 1 })).status).toBe(400);
		expect((await api('POST', '/api/v1/purchase-requests', { cookie }, { partId: a, quantity: 0 })).status).toBe(400);
		const ok = await api('PATCH', `/api/v1/purchase-requests/${draft.id}`, { cookie }, { status: 'requested', note: 'approved by the group' });
		expect(ok.status).toBe(200);
		const body = await ok.json();
		expect(body.status).toBe('requested');
		expect(body.events.at(-1)).toMatchObject({ from: 'draft', to: 'requested', note: 'approved by the group' });
		const eng = await cookieFor('engineer@tarnwell.example');
		expect((await api('POST', '/api/v1/purchase-requests', { cookie: eng }, { partId: a, quantity: 1 })).status).toBe(403);
		expect((await api('GET', '/api/v1/reorder', { cookie: eng })).status).toBe(403);
	});

	it('a purchaser may PATCH only the purchasing fields of a part', async () => {
		const p = await part('PF');
		const ok = await api('PATCH', `/api/v1/parts/${p}`, { cookie }, { reorderPoint: 4, reorderQuantity: 6, leadTimeDays: 20, unitPrice: 19.99 });
		expect(ok.status).toBe(200);
		expect(await ok.json()).toMatchObject({ reorderPoint: 4, reorderQuantity: 6, leadTimeDays: 20 });
		const no = await api('PATCH', `/api/v1/parts/${p}`, { cookie }, { reorderPoint: 5, name: 'Renamed' });
		expect(no.status).toBe(403);
		const [row] = await db.select().from(t.parts).where(eq(t.parts.id, p));
		expect(row.reorderPoint).toBe(4);
		expect(row.name).not.toBe('Renamed');
	});

	it('the board lists a flagged part with its figures, and its CSV export reads back the same rows', async () => {
		const p = await part('BD', { reorderPoint: 3, reorderQuantity: 4, supplierPartNumber: `=${tag}` });
		await ops.receive(db, { partId: p, quantity: 4, locationId: loc }, { id: who.stockroom.id });
		await ops.issue(db, { partId: p, quantity: 2, locationId: loc, issuedTo: 'bench 3' }, { id: who.engineer.id });
		await ops.returnStock(db, { partId: p, quantity: 1, locationId: loc }, { id: who.engineer.id });
		// on hand 3, available 3 = reorder point; usage 2 − 1 = 1
		const board = await (await api('GET', '/api/v1/reorder', { cookie })).json();
		const row = board.items.find((r: { partId: number }) => r.partId === p);
		expect(row).toMatchObject({ onHand: 3, reserved: 0, available: 3, usage90d: 1, flag: 'reorder-point', onOrder: 0, leadTimeDays: 12, supplier: 'Quillmere Glassworks' });
		// need = 3 + 1 − 3 + ceil(1/90 × 12) = 2; reorder quantity 4 wins
		expect(row.suggestedQuantity).toBe(4);
		const other = board.items.find((r: { partId: number; flag: string | null }) => r.partId !== p && r.flag);
		const ids = [p, ...(other ? [other.partId] : [])];
		const q = new URLSearchParams(ids.map((i) => ['partId', String(i)]));
		q.set(`qty-${p}`, '7');
		const res = await api('GET', `/api/v1/reorder/export.csv?${q}`, { cookie });
		expect(res.status).toBe(200);
		expect(res.headers.get('content-type')).toContain('text/csv');
		expect(res.headers.get('content-disposition')).toMatch(/^attachment; filename="reorder-\d{4}-\d{2}-\d{2}\.csv"$/);
		const text = await res.text();
		const raw = Papa.parse<string[]>(text.replace(/^\ufeff/, '')).data.find((cells) => cells[0] === `${tag}-BD`);
		expect(raw?.[3]).toBe(`'=${tag}`); // formula neutralised in the file, restored by the parser
		const lines = parseOrderCsv(text);
		expect(lines.map((l) => l.sku).sort()).toEqual(board.items.filter((r: { partId: number }) => ids.includes(r.partId)).map((r: { sku: string }) => r.sku).sort());
		const mine = lines.find((l) => l.sku === `${tag}-BD`)!;
		expect(mine).toEqual({
			sku: `${tag}-BD`,
			name: row.name,
			supplier: 'Quillmere Glassworks',
			supplierPartNumber: `=${tag}`,
			quantity: 7,
			unitPrice: 42,
			currency: 'EUR',
			leadTimeDays: 12,
			onHand: 3,
			available: 3,
			reorderPoint: 3
		});
		expect((await api('GET', '/api/v1/reorder/export.csv?partId=abc', { cookie })).status).toBe(400);
	});

	it('receiving through the API tells the engineer whose reservation waited for the part', async () => {
		const p = await part('WAIT', { reorderPoint: 1 });
		await ops.receive(db, { partId: p, quantity: 2, locationId: loc }, { id: who.stockroom.id });
		await db.transaction((tx) => res.reserve(tx, { partId: p, quantity: 2, until: new Date(Date.now() + 7 * 86_400_000), userId: who.engineer2.id }));
		await ops.scrap(db, { partId: p, quantity: 1, locationId: loc, condition: 'usable', reason: 'cracked in the drawer' }, { id: who.stockroom.id });
		const id = await requests.createRequest(db, { partId: p, quantity: 1, status: 'requested' }, purchaser);
		await requests.patchRequest(db, id, { status: 'ordered' }, purchaser);
		const since = await lastOutboxId(db);
		const r = await api('PATCH', `/api/v1/purchase-requests/${id}`, { cookie }, { receive: { quantity: 1, locationId: loc } });
		expect(r.status).toBe(200);
		const body = await r.json();
		expect(body.status).toBe('received');
		expect(body.receipt.notified).toBe(1);
		const [msg] = await waitForMentions(db, `${tag}-WAIT`, 1, since).then((rows) => rows.filter((m) => m.toAddresses.includes('engineer2@tarnwell.example')));
		expect(msg.subject).toContain(`${tag}-WAIT has arrived`);
		expect(msg.textBody).toContain('fully covered');
	});
});
