import { afterAll, describe, expect, it } from 'vitest';
import { and, count, eq, inArray, like, TransactionRollbackError } from 'drizzle-orm';
import * as t from '../../../src/lib/server/db/schema';
import * as importsService from '../../../src/lib/server/imports/service';
import { DomainError } from '../../../src/lib/server/errors';
import { refractiveIndex } from '../../../src/lib/optics';
import { csvLine } from '../../../src/lib/server/imports/csv';
import { insertReturning } from '../../../src/lib/server/imports/bulk-sql';
import { countParts, db, deleteParts, enc, pcxRow, PCX_HEADER, pool, stockroomId, store, upload } from './helpers';

const tag = `IM${Date.now().toString(36).toUpperCase()}`;

afterAll(async () => {
	await deleteParts(tag);
	await pool.end();
});

describe('a 20,000-row import against MariaDB', () => {
	const prefix = `${tag}-BIG-`;
	const rows = 20_000;
	const text = PCX_HEADER + '\n' + Array.from({ length: rows }, (_, i) => pcxRow(`${prefix}${i}`, i)).join('\n') + '\n';

	it('dry-runs every row without writing, then commits them all', async () => {
		const { id, actorId } = await upload(text);
		const check = await importsService.runNow(db, store, id, 'check', actorId);
		expect(check.status).toBe('checked');
		expect(check).toMatchObject({ created: rows, updated: 0, unchanged: 0, rejected: 0, rows });
		expect(await countParts(prefix)).toBe(0);

		const commit = await importsService.runNow(db, store, id, 'commit', actorId);
		expect(commit.status).toBe('committed');
		expect(commit.created).toBe(rows);
		expect(await countParts(prefix)).toBe(rows);
		const report = await importsService.getReport(db, id);
		expect(report).toMatchObject({ status: 'committed', rowsTotal: rows, rowsDone: rows, counts: { created: rows, rejected: 0 } });

		// Spot check one stored part: surfaces and the derived EFL from the catalogue's computation.
		// Plano-convex, flat side last: f = R/(n − 1) (Hecht, Optics, 5th ed. 2017, §6.2.1; from memory).
		const [p] = await db.select().from(t.parts).where(eq(t.parts.sku, `${prefix}7`));
		const surfaces = await db.select().from(t.partSurfaces).where(eq(t.partSurfaces.partId, p.id)).orderBy(t.partSurfaces.position);
		expect(surfaces.map((s) => [s.radiusMm, s.thicknessMm, s.materialCode])).toEqual([
			[53.5, 4, '517642'],
			[null, null, null]
		]);
		expect(p.eflSource).toBe('prescription');
		expect(p.paraxialEflMm).toBeCloseTo(53.5 / (refractiveIndex('517642', 587.6) - 1), 4);
		expect(p.primaryMaterial).toBe('517642');
		expect(p.unitPriceMinor).toBe(1507);

		// The same file again: everything is unchanged.
		const again = await upload(text);
		const rerun = await importsService.runNow(db, store, again.id, 'check', actorId);
		expect(rerun).toMatchObject({ created: 0, updated: 0, unchanged: rows, rejected: 0 });
	});
});

describe('updates by supplier part number', () => {
	it('updates the part with the same (supplier, supplier part number), keeping unmapped fields', async () => {
		const sku = `${tag}-UPD-1`;
		const first = await upload(PCX_HEADER + '\n' + pcxRow(sku, 3) + '\n');
		await importsService.runNow(db, store, first.id, 'commit', first.actorId);
		const [kestrel] = await db.select().from(t.suppliers).where(eq(t.suppliers.name, 'Kestrelmoor Optics'));
		// A supplier price list: part number, price in euros, lead time; no SKU column.
		const list = `Part No.;Price;Lead time\nKM-IMP-${sku};19,90;21\n`;
		const second = await upload(list, { supplierId: kestrel.id });
		expect(second.suggestion.mapping).toEqual({ supplierPartNumber: 'Part No.', unitPrice: 'Price', leadTimeDays: 'Lead time' });
		expect(second.suggestion.units.unitPrice).toBe('major');
		const out = await importsService.runNow(db, store, second.id, 'commit', second.actorId);
		expect(out).toMatchObject({ status: 'committed', created: 0, updated: 1, rejected: 0 });
		const [p] = await db.select().from(t.parts).where(eq(t.parts.sku, sku));
		expect(p.unitPriceMinor).toBe(1990);
		expect(p.leadTimeDays).toBe(21);
		expect(p.name).toBe('Imported plano-convex 3');
		// The mapping is remembered for the supplier.
		const [after] = await db.select().from(t.suppliers).where(eq(t.suppliers.id, kestrel.id));
		expect((after.importMapping as { mapping: Record<string, string> }).mapping).toMatchObject({ supplierPartNumber: 'Part No.' });
	});

	it('converts inch columns to mm', async () => {
		const sku = `${tag}-INCH-1`;
		const csv = `sku\tname\tkind\tDia (in)\tEFL (in)\n${sku}\tInch part\tother\t1\t2\n`;
		const up = await upload(csv);
		expect(up.suggestion.units).toMatchObject({ diameterMm: 'in', eflMm: 'in' });
		const out = await importsService.runNow(db, store, up.id, 'commit', up.actorId);
		expect(out.status).toBe('committed');
		const [p] = await db.select().from(t.parts).where(eq(t.parts.sku, sku));
		expect(p.diameterMm).toBeCloseTo(25.4, 12);
		expect(p.eflMm).toBeCloseTo(50.8, 12);
	});
});

describe('bad files are refused before anything is stored', () => {
	const cases: [string, Uint8Array, number, RegExp][] = [
		['over the size limit', new Uint8Array(17 * 1024 * 1024).fill(0x61), 413, /at most 16 MB/],
		['not a CSV (a PDF)', enc('%PDF-1.7\nbinary'), 400, /PDF document, not a CSV/],
		['empty', new Uint8Array(), 400, /The file is empty/],
		['header only', enc(PCX_HEADER + '\r\n'), 400, /header row but no data rows/]
	];
	for (const [what, bytes, status, message] of cases) {
		it(`refuses a file ${what}`, async () => {
			const before = (await db.select({ n: count() }).from(t.imports))[0].n;
			const err = await importsService
				.createImport(db, store, { filename: 'x.csv', file: bytes, supplierId: null, actorId: await stockroomId() })
				.catch((e) => e);
			expect(err).toBeInstanceOf(DomainError);
			expect(err.status).toBe(status);
			expect(err.message).toMatch(message);
			expect((await db.select({ n: count() }).from(t.imports))[0].n).toBe(before);
		});
	}
});

describe('bad rows: a clear message per row and nothing half-written', () => {
	const p = `${tag}-BAD-`;
	const rows = [
		pcxRow(`${p}OK1`, 1),
		pcxRow(`${p}DUP`, 2),
		pcxRow(`${p}DUP`, 3), // same SKU again with other values
		pcxRow(`${p}MAT`, 4).replace('517642', 'unobtainium'),
		pcxRow(`${p}NAN`, 5).replace(',25.4,', ',wide,'),
		pcxRow(`${p}NEG`, 6).replace(',25.4,', ',-25.4,'),
		pcxRow(`${p}RAD`, 7).replace(/,25\.4,[0-9.]+,/, ',25.4,10,'),
		pcxRow(`${p}THK`, 8).replace(',4,517642', ',-4,517642')
	];
	const csv = PCX_HEADER + '\n' + rows.join('\n') + '\n';

	it('lists every bad row in the dry run with row, column, value and message', async () => {
		const { id, actorId } = await upload(csv);
		const out = await importsService.runNow(db, store, id, 'check', actorId);
		expect(out).toMatchObject({ status: 'checked', created: 2, rejected: 6 });
		const report = await importsService.getReport(db, id);
		// The first error of each row (a row may have more).
		const byRow = new Map<number, (typeof report.errors)[number]>();
		for (const e of report.errors) if (!byRow.has(e.row)) byRow.set(e.row, e);
		expect(byRow.get(4)).toMatchObject({ column: 'sku', value: `${p}DUP`, message: expect.stringMatching(/Row 3 of this file is for the same part/) });
		expect(byRow.get(5)).toMatchObject({ column: 'material1', value: 'unobtainium', message: expect.stringMatching(/Unknown material "unobtainium"/) });
		expect(byRow.get(6)).toMatchObject({ column: 'diameterMm', value: 'wide', message: expect.stringMatching(/Not a number/) });
		expect(byRow.get(7)).toMatchObject({ column: 'diameterMm', value: '-25.4', message: 'The diameter must be more than 0 mm.' });
		expect(byRow.get(8)).toMatchObject({ column: 'r1Mm', value: '10', message: expect.stringMatching(/A sphere of radius 10 mm cannot span a 25.4 mm diameter/) });
		expect(report.errors.filter((e) => e.row === 9)).toContainEqual({ row: 9, column: 't1Mm', value: '-4', message: 'The thickness cannot be negative.' });
		expect(await countParts(p)).toBe(0);

		const csvReport: string[] = [];
		for await (const chunk of importsService.errorReportCsv(db, id)) csvReport.push(chunk);
		const lines = csvReport.join('').trim().split('\r\n');
		expect(lines[0]).toBe('row,column,value,message');
		expect(lines).toHaveLength(1 + report.errorCount);
	});

	it('refuses to commit while rows are rejected, and writes none of the good ones', async () => {
		const { id, actorId } = await upload(csv);
		const out = await importsService.runNow(db, store, id, 'commit', actorId);
		expect(out.status).toBe('failed');
		expect(out.message).toMatch(/6 rows were rejected, so nothing was written/);
		expect(await countParts(p)).toBe(0);
		const report = await importsService.getReport(db, id);
		expect(report.status).toBe('failed');
		expect(report.counts.rejected).toBe(6);
	});

	it('lists every problem of a row at once, and reads unitPrice as currency units, decimal comma too', async () => {
		const q = `${tag}-MULTI-`;
		// Row 2: an unreadable price and a radius too small for the diameter. Then a ;-file's unitPrice 12,50: 12.50.
		const multi = PCX_HEADER + '\n' + pcxRow(`${q}1`, 1).replace(/,25\.4,[0-9.]+,/, ',25.4,10,').replace(/,[\d.]+$/, ',cheap') + '\n';
		const a = await upload(multi);
		await importsService.runNow(db, store, a.id, 'check', a.actorId);
		const ra = await importsService.getReport(db, a.id);
		expect(ra.errors.map((e) => [e.row, e.column])).toEqual([
			[2, 'unitPrice'],
			[2, 'r1Mm']
		]);
		const semi = 'sku;name;kind;diameterMm;eflMm;unitPrice\n' + `${q}2;Priced part;other;25,4;100;12,50\n`;
		const b = await upload(semi);
		await importsService.runNow(db, store, b.id, 'check', b.actorId);
		const rb = await importsService.getReport(db, b.id);
		expect(rb.errors).toEqual([]);
		expect(rb.counts.created).toBe(1);
		expect(await countParts(q)).toBe(0); // a dry run
	});

	it('commits the good rows only when asked to skip the rejected ones', async () => {
		const { id, actorId } = await upload(csv, { skipRejected: true });
		const out = await importsService.runNow(db, store, id, 'commit', actorId);
		expect(out).toMatchObject({ status: 'committed', created: 2, rejected: 6 });
		expect(await countParts(p)).toBe(2);
	});
});

describe('a failure in the middle of a commit', () => {
	it('leaves zero new rows (one transaction over all batches)', async () => {
		const prefix = `${tag}-FAIL-`;
		const csv = PCX_HEADER + '\n' + Array.from({ length: 2500 }, (_, i) => pcxRow(`${prefix}${i}`, i)).join('\n') + '\n';
		const { id, actorId } = await upload(csv);
		const suppliersBefore = (await db.select({ n: count() }).from(t.suppliers))[0].n;
		const out = await importsService.runNow(db, store, id, 'commit', actorId, {
			batchRows: 1000,
			hooks: {
				afterBatch: ({ batch }) => {
					if (batch === 2) throw new Error('injected failure after batch 2');
				}
			}
		});
		expect(out.status).toBe('failed');
		expect(out.message).toMatch(/injected failure after batch 2.*Nothing was written/);
		expect(await countParts(prefix)).toBe(0);
		expect((await db.select({ n: count() }).from(t.suppliers))[0].n).toBe(suppliersBefore);
		const surfaces = await db
			.select({ n: count() })
			.from(t.partSurfaces)
			.innerJoin(t.parts, eq(t.parts.id, t.partSurfaces.partId))
			.where(like(t.parts.sku, `${prefix}%`));
		expect(surfaces[0].n).toBe(0);
		// It can be run again afterwards.
		const retry = await importsService.runNow(db, store, id, 'commit', actorId);
		expect(retry).toMatchObject({ status: 'committed', created: 2500 });
	});

	it('refuses a second run while one is going, and any run once committed', async () => {
		const { id, actorId } = await upload(PCX_HEADER + '\n' + pcxRow(`${tag}-ONCE`, 1) + '\n');
		await importsService.beginRun(db, id, 'check');
		await expect(importsService.beginRun(db, id, 'commit')).rejects.toBeInstanceOf(DomainError);
		await db.update(t.imports).set({ status: 'checked' }).where(eq(t.imports.id, id));
		await importsService.runNow(db, store, id, 'commit', actorId);
		await expect(importsService.beginRun(db, id, 'check')).rejects.toThrow(/already in the catalogue/);
		const parts = await db.select().from(t.parts).where(and(like(t.parts.sku, `${tag}-ONCE%`), inArray(t.parts.kind, ['plano-convex'])));
		expect(parts).toHaveLength(1);
	});
});

describe('batched writes store exactly what the file says', () => {
	it('keeps quotes, backslashes, question marks and non-ASCII text as written', async () => {
		const sku = `${tag}-TXT-1`;
		const name = `O'Hare "wide" \\ lens? ¿ü 🔭 ; -- /* x */`;
		const coating = `BBAR \\' 400?700`;
		const notes = `line one\nline two, with "quotes" and a trailing backslash \\`;
		const csv = csvLine(['sku', 'name', 'kind', 'diameterMm', 'eflMm', 'coating', 'notes']) + csvLine([sku, name, 'other', '12.5', '-40', coating, notes]);
		const up = await upload(csv);
		const out = await importsService.runNow(db, store, up.id, 'commit', up.actorId);
		expect(out).toMatchObject({ status: 'committed', created: 1 });
		const [p] = await db.select().from(t.parts).where(eq(t.parts.sku, sku));
		expect(p).toMatchObject({ name, coating, notes, diameterMm: 12.5, eflMm: -40, eflSource: 'nominal', paraxialEflMm: -40 });
	});

	it('updates many parts across batches (surfaces replaced, EFL recomputed) and counts the same in dry run and commit', async () => {
		const prefix = `${tag}-MANY-`;
		const n = 230;
		const first = await upload(PCX_HEADER + '\n' + Array.from({ length: n }, (_, i) => pcxRow(`${prefix}${i}`, i)).join('\n') + '\n');
		expect(await importsService.runNow(db, store, first.id, 'commit', first.actorId, { batchRows: 50 })).toMatchObject({ status: 'committed', created: n });
		// The same parts with a 10 mm longer radius for even rows; odd rows unchanged.
		const rows = Array.from({ length: n }, (_, i) => {
			const row = pcxRow(`${prefix}${i}`, i);
			if (i % 2) return row;
			const cells = row.split(',');
			cells[4] = (Number(cells[4]) + 10).toFixed(2);
			return cells.join(',');
		});
		const second = await upload(PCX_HEADER + '\n' + rows.join('\n') + '\n');
		const expected = { created: 0, updated: n / 2, unchanged: n / 2, rejected: 0 };
		expect(await importsService.runNow(db, store, second.id, 'check', second.actorId, { batchRows: 50 })).toMatchObject({ status: 'checked', ...expected });
		expect(await importsService.runNow(db, store, second.id, 'commit', second.actorId, { batchRows: 50 })).toMatchObject({ status: 'committed', ...expected });
		for (const i of [0, 1, 100, 229 - 1]) {
			const [p] = await db.select().from(t.parts).where(eq(t.parts.sku, `${prefix}${i}`));
			const surfaces = await db.select().from(t.partSurfaces).where(eq(t.partSurfaces.partId, p.id)).orderBy(t.partSurfaces.position);
			const r = 50 + (i % 400) * 0.5 + (i % 2 ? 0 : 10);
			expect(surfaces.map((s) => [s.position, s.radiusMm, s.thicknessMm, s.materialCode])).toEqual([
				[0, r, 4, '517642'],
				[1, null, null, null]
			]);
			// Plano-convex, flat side last: f = R/(n − 1) (Hecht, Optics, 5th ed. 2017, §6.2.1; from memory).
			expect(p.paraxialEflMm).toBeCloseTo(r / (refractiveIndex('517642', 587.6) - 1), 4);
			expect(p.name).toBe(`Imported plano-convex ${i}`);
		}
	});

	it('finds a part repeated across batch boundaries, in the dry run as in the commit', async () => {
		const p = `${tag}-XB-`;
		const changed = pcxRow(`${p}B`, 2).replace('Imported plano-convex 2', 'Imported plano-convex two');
		// Batches of 2: [A, B] [A again, C] [B with another name]
		const csv = PCX_HEADER + '\n' + [pcxRow(`${p}A`, 1), pcxRow(`${p}B`, 2), pcxRow(`${p}A`, 1), pcxRow(`${p}C`, 3), changed].join('\n') + '\n';
		const up = await upload(csv, { skipRejected: true });
		const expected = { created: 3, updated: 0, unchanged: 1, rejected: 1, rows: 5 };
		expect(await importsService.runNow(db, store, up.id, 'check', up.actorId, { batchRows: 2 })).toMatchObject({ status: 'checked', ...expected });
		const report = await importsService.getReport(db, up.id);
		expect(report.errors).toEqual([
			{ row: 6, column: 'sku', value: `${p}B`, message: 'Row 3 of this file is for the same part with other values: each part may appear only once.' }
		]);
		expect(await importsService.runNow(db, store, up.id, 'commit', up.actorId, { batchRows: 2 })).toMatchObject({ status: 'committed', ...expected });
		expect(await countParts(p)).toBe(3);
	});

	it('rolls back every batch when the database refuses one in the middle', async () => {
		const prefix = `${tag}-DBF-`;
		const rows = Array.from({ length: 25 }, (_, i) => pcxRow(`${prefix}${i}`, i));
		const up = await upload(PCX_HEADER + '\n' + rows.join('\n') + '\n');
		const out = await importsService.runNow(db, store, up.id, 'commit', up.actorId, {
			batchRows: 10,
			hooks: {
				afterBatch: async ({ batch }) => {
					// Another connection takes the SKU of a row of batch 2 after the transaction's first read:
					// the transaction does not see it, takes the row as new, and its insert is refused (duplicate key).
					if (batch === 1) await db.insert(t.parts).values({ sku: `${prefix}15`, name: 'Taken meanwhile', kind: 'other', diameterMm: 10 });
				}
			}
		});
		expect(out.status).toBe('failed');
		expect(out.message).toMatch(new RegExp(`The SKU "${prefix}15" is already in use\\. Nothing was written`));
		const left = await db.select({ sku: t.parts.sku, name: t.parts.name }).from(t.parts).where(like(t.parts.sku, `${prefix}%`));
		expect(left).toEqual([{ sku: `${prefix}15`, name: 'Taken meanwhile' }]);
		expect((await importsService.getReport(db, up.id)).status).toBe('failed');
	});
});

describe('ids of a multi-row insert', () => {
	it('gives each inserted row the id MariaDB gave it (INSERT ... RETURNING)', async () => {
		const prefix = `${tag}-IDS-`;
		const skus = [0, 1, 2].map((i) => `${prefix}${i}`);
		await db.transaction(async (tx) => {
			const row = (sku: string) => ({ sku, name: 'Id check', kind: 'other' as const, diameterMm: 10 });
			const back = await insertReturning(tx, t.parts, ['sku', 'name', 'kind', 'diameterMm'], skus.map(row), ['id', 'sku']);
			const stored = await tx.select({ id: t.parts.id, sku: t.parts.sku }).from(t.parts).where(like(t.parts.sku, `${prefix}%`));
			expect(stored).toHaveLength(3);
			expect(back.map((r) => [Number(r.id), r.sku])).toEqual(skus.map((s) => [stored.find((r) => r.sku === s)!.id, s]));
			tx.rollback();
		}).catch((err) => {
			if (!(err instanceof TransactionRollbackError)) throw err;
		});
		expect(await countParts(prefix)).toBe(0);
	});
});
