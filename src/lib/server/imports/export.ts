/**
 * CSV exports: the catalogue (the current filtered, sorted view) and stock by location. Headers are
 * the Part JSON names with surfaces flattened (r1Mm, t1Mm, material1, r2Mm, ...), so the importer
 * reads an export back with no mapping. Text cells that a spreadsheet would run as a formula get a
 * leading ' (the importer strips it again). Numbers are written in JavaScript's shortest exact
 * form, so a round trip gives the same doubles.
 */
import { z } from 'zod';
import { and, asc, desc, eq, gt, max, sql } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { locations, partSurfaces, parts, stock } from '$lib/server/db/schema';
import { listConditions, partsJson, SORTS, type ListQuery, type PartJson } from '$lib/server/catalogue';
import { csvLine, escapeFormula } from './csv';
import { SCALAR_FIELDS, surfaceFields } from './fields';

const PAGE = 500;

const text = (v: string | null | undefined) => (v === null || v === undefined ? '' : escapeFormula(v));
const num = (v: number | null | undefined) => (v === null || v === undefined ? '' : String(v));

/** The export's header for parts with up to `surfaces` surfaces. */
export function partsHeader(surfaces: number): string[] {
	return ['id', ...SCALAR_FIELDS, ...Array.from({ length: surfaces }, (_, i) => surfaceFields(i + 1)).flat(), 'onHand', 'available'];
}

function partCells(p: PartJson, surfaces: number): string[] {
	const cells: string[] = [String(p.id)];
	for (const f of SCALAR_FIELDS) {
		const v = (p as unknown as Record<string, unknown>)[f];
		cells.push(typeof v === 'number' ? num(v) : text(v as string | null));
	}
	for (let k = 0; k < surfaces; k++) {
		const s = p.surfaces[k];
		cells.push(s ? num(s.radiusMm) : '', s ? num(s.thicknessMm) : '', s ? text(s.material) : '');
	}
	cells.push(String(p.onHand), String(p.available));
	return cells;
}

/** Streams the catalogue as CSV for a list query (all pages; `page`/`pageSize` are ignored). */
export async function* partsCsv(db: DbOrTx, q: ListQuery): AsyncGenerator<string> {
	const where = listConditions(q);
	const [{ n }] = await db
		.select({ n: max(sql<number>`c`) })
		.from(sql`(select count(*) as c from ${partSurfaces} group by ${partSurfaces.partId}) as per_part`);
	const surfaces = Math.max(2, Number(n ?? 0));
	yield '\uFEFF' + csvLine(partsHeader(surfaces)); // BOM: spreadsheets then read the file as UTF-8
	const col = SORTS[q.sort];
	const dir = q.order === 'desc' ? desc : asc;
	for (let offset = 0; ; offset += PAGE) {
		const rows = await db
			.select()
			.from(parts)
			.where(where)
			.orderBy(sql`${col} is null`, dir(col), dir(parts.id))
			.limit(PAGE)
			.offset(offset);
		if (!rows.length) return;
		const json = await partsJson(db, rows);
		yield json.map((p) => csvLine(partCells(p, surfaces))).join('');
		if (rows.length < PAGE) return;
	}
}

/** `GET /stock/export.csv`: optionally one location. */
export const stockExportQuerySchema = z.object({ locationId: z.coerce.number().int().positive().optional() }).strict();

export const STOCK_HEADER = ['locationCode', 'locationName', 'sku', 'name', 'kind', 'diameterMm', 'condition', 'quantity'];

/** Streams stock by location (non-zero quantities), ordered by location code, SKU and condition. */
export async function* stockCsv(db: DbOrTx, opts: { locationId?: number } = {}): AsyncGenerator<string> {
	yield '\uFEFF' + csvLine(STOCK_HEADER);
	const where = opts.locationId ? and(gt(stock.quantity, 0), eq(stock.locationId, opts.locationId)) : gt(stock.quantity, 0);
	for (let offset = 0; ; offset += PAGE) {
		const rows = await db
			.select({
				code: locations.code,
				locName: locations.name,
				sku: parts.sku,
				name: parts.name,
				kind: parts.kind,
				diameterMm: parts.diameterMm,
				condition: stock.condition,
				quantity: stock.quantity
			})
			.from(stock)
			.innerJoin(locations, eq(locations.id, stock.locationId))
			.innerJoin(parts, eq(parts.id, stock.partId))
			.where(where)
			.orderBy(asc(locations.code), asc(parts.sku), asc(stock.condition), asc(stock.id))
			.limit(PAGE)
			.offset(offset);
		if (!rows.length) return;
		yield rows.map((r) => csvLine([text(r.code), text(r.locName), text(r.sku), text(r.name), r.kind, num(r.diameterMm), r.condition, String(r.quantity)])).join('');
		if (rows.length < PAGE) return;
	}
}

/** A web stream of CSV text from a generator, for a Response body. */
export function csvStream(gen: AsyncGenerator<string>): ReadableStream<Uint8Array> {
	const enc = new TextEncoder();
	return new ReadableStream({
		async pull(controller) {
			const { value, done } = await gen.next();
			if (done) controller.close();
			else controller.enqueue(enc.encode(value));
		},
		async cancel() {
			await gen.return(undefined);
		}
	});
}

