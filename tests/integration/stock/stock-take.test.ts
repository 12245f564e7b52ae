/**
 * Stock take over HTTP (issue 16): `POST /api/v1/stock-takes` with a counted CSV. The dry run answers
 * booked, counted and difference per line and writes nothing; the commit writes one adjustment per
 * difference with the reason "stock take" and the date, in one transaction; one bad line refuses the
 * whole count. The ledger still sums to the stock table afterwards.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray, sql } from 'drizzle-orm';
import { testDb } from '../../support/env';
import * as t from '../../../src/lib/server/db/schema';
import * as parts from '../../../src/lib/server/catalogue/parts';
import * as ops from '../../../src/lib/server/stock/operations';
import { APP, cookieFor, url } from '../accounts/helpers';

const { db, pool } = testDb();
const tag = `ST${Date.now().toString(36).toUpperCase()}`;
const enc = (s: string) => new TextEncoder().encode(s);
let a = 0;
let b = 0;
let stockroomId = 0;
let drawer = { id: 0, code: '' };
let qc = { id: 0, code: '' };

beforeAll(async () => {
	const [u] = await db.select().from(t.users).where(eq(t.users.email, 'stockroom@tarnwell.example'));
	stockroomId = u.id;
	const locs = await db.select().from(t.locations);
	const d = locs.find((l) => l.code === 'B2-D1')!;
	const q = locs.find((l) => l.code === 'QC-SHELF')!;
	[drawer, qc] = [{ id: d.id, code: d.code }, { id: q.id, code: q.code }];
	for (const s of ['A', 'B']) {
		const { id } = await parts.createPart(db, { sku: `${tag}-${s}`, name: `Stock take test ${s}`, kind: 'other', diameterMm: 25, eflMm: 80 }, { id: stockroomId });
		if (s === 'A') a = id;
		else b = id;
	}
	await ops.receive(db, { partId: a, quantity: 5, locationId: drawer.id }, { id: stockroomId });
	await ops.receive(db, { partId: b, quantity: 2, locationId: drawer.id }, { id: stockroomId });
	await ops.receive(db, { partId: b, quantity: 1, locationId: qc.id, condition: 'quarantine' }, { id: stockroomId });
});
afterAll(async () => {
	await db.update(t.parts).set({ archivedAt: new Date() }).where(inArray(t.parts.id, [a, b]));
	await pool.end();
});

async function post(csv: string, fields: Record<string, string> = {}, role = 'stockroom') {
	const cookie = await cookieFor(`${role}@tarnwell.example`);
	const boundary = `----st${Date.now()}`;
	const chunks = [enc(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="count.csv"\r\nContent-Type: text/csv\r\n\r\n`), enc(csv), enc('\r\n')];
	for (const [k, v] of Object.entries(fields)) chunks.push(enc(`--${boundary}\r\nContent-Disposition: form-data; name="${k}"\r\n\r\n${v}\r\n`));
	chunks.push(enc(`--${boundary}--\r\n`));
	const res = await fetch(url('/api/v1/stock-takes'), { method: 'POST', headers: { cookie, origin: APP(), 'content-type': `multipart/form-data; boundary=${boundary}` }, body: Buffer.concat(chunks) });
	return { status: res.status, json: await res.json() };
}
const held = async () => Object.fromEntries((await db.select().from(t.stock).where(inArray(t.stock.partId, [a, b]))).map((s) => [`${s.partId === a ? 'A' : 'B'}/${s.locationId === qc.id ? 'QC' : 'D'}/${s.condition}`, s.quantity]));
const takes = () => db.select().from(t.movements).where(and(inArray(t.movements.partId, [a, b]), eq(t.movements.reason, 'stock take')));

describe('POST /api/v1/stock-takes', () => {
	const count = () =>
		`locationCode,sku,condition,quantity\n${drawer.code},${tag}-A,usable,3\n${drawer.code},${tag}-B,,2\n${qc.code},${tag}-B,quarantine,0\n${drawer.code},${tag}-B,damaged,1\n`;

	it('dry run: booked, counted and difference per line, nothing written', async () => {
		const before = await held();
		const res = await post(count(), { dryRun: 'true' });
		expect(res.status).toBe(200);
		expect(res.json.dryRun).toBe(true);
		expect(res.json.lines.map((l: { sku: string; condition: string; booked: number; counted: number; difference: number; row: number }) => [l.row, l.sku, l.condition, l.booked, l.counted, l.difference])).toEqual([
			[2, `${tag}-A`, 'usable', 5, 3, -2],
			[3, `${tag}-B`, 'usable', 2, 2, 0],
			[4, `${tag}-B`, 'quarantine', 1, 0, -1],
			[5, `${tag}-B`, 'damaged', 0, 1, 1]
		]);
		expect(res.json.totals).toEqual({ lines: 4, differences: 3, unitsFound: 1, unitsMissing: 3 });
		expect(await held()).toEqual(before);
		expect(await takes()).toHaveLength(0);
	});

	it('refuses the whole count for one bad line, naming every bad line; writes nothing', async () => {
		const bad = count() + `${drawer.code},NO-SUCH-SKU,usable,1\nNOWHERE,${tag}-A,usable,1\n${drawer.code},${tag}-A,usable,-1\n${drawer.code},${tag}-A,,4\n`;
		const res = await post(bad);
		expect(res.status).toBe(400);
		expect(res.json.error.code).toBe('invalid-lines');
		expect(res.json.error.lines.map((l: { row: number; column: string }) => [l.row, l.column])).toEqual([
			[6, 'sku'],
			[7, 'locationCode'],
			[8, 'quantity'],
			[9, 'sku']
		]);
		expect(res.json.error.lines[3].message).toMatch(/Row 2 counts the same part/);
		expect(await takes()).toHaveLength(0);
		expect((await post('sku,quantity\nX,1\n')).json.error.code).toBe('missing-columns');
		expect((await post(count(), {}, 'engineer')).status).toBe(403);
	});

	it('commit: one adjustment per difference, reason "stock take" and the date, then the books match the count', async () => {
		const res = await post(count());
		expect(res.status).toBe(201);
		expect(res.json.movements).toHaveLength(3);
		expect(await held()).toEqual({ 'A/D/usable': 3, 'B/D/usable': 2, 'B/QC/quarantine': 0, 'B/D/damaged': 1 });
		const written = await takes();
		expect(written).toHaveLength(3);
		const day = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' }).format(new Date());
		for (const m of written) {
			expect(m.kind).toBe('adjust');
			expect(m.note).toContain(`on ${day}`);
		}
		// the ledger still sums to the stock table (receipts + found − missing)
		const [{ net }] = (await db.execute(sql`select coalesce(sum(case when to_location_id is not null then quantity else -quantity end), 0) as net from movements where part_id in (${a}, ${b})`))[0] as unknown as { net: string }[];
		expect(Number(net)).toBe(3 + 2 + 0 + 1);
		// counting again changes nothing
		const again = await post(count());
		expect(again.status).toBe(201);
		expect(again.json.movements).toEqual([]);
	});
});
