/**
 * The catalogue list: server-side filter, sort and paging over `parts`, for
 * `GET /api/v1/parts` and the `/parts` page. Every filter and sort column has an index
 * (see the parts table); the EFL filter and sort use the stored `paraxial_efl_mm`
 * (EFL at the lab's default wavelength), so they need no optics at query time.
 */
import { and, asc, count, desc, eq, gte, inArray, isNotNull, isNull, like, lte, or, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import type { DbOrTx } from '$lib/server/db';
import { PART_KINDS, parts } from '$lib/server/db/schema';
import { availableSql } from '$lib/server/stock/availability';
import { partsJson } from './parts';
import type { PartJson } from './part-json';

/** Sortable columns of the list (allow-list) → the column sorted on. */
export const SORTS = {
	sku: parts.sku,
	name: parts.name,
	kind: parts.kind,
	eflMm: parts.paraxialEflMm,
	diameterMm: parts.diameterMm,
	material: parts.primaryMaterial,
	coating: parts.coating,
	updatedAt: parts.updatedAt
} as const;
export type SortKey = keyof typeof SORTS;
const NULLABLE_SORTS = new Set<SortKey>(['eflMm', 'material', 'coating']);

export const MAX_PAGE_SIZE = 200;

const blankToUndefined = (v: unknown) => (v === '' || v === null ? undefined : v);
const num = () => z.preprocess(blankToUndefined, z.coerce.number({ error: 'Enter a number.' }).optional());

/** The list query as URL parameters (strings), validated and typed. Unknown parameters are refused. */
export const listQuerySchema = z
	.object({
		q: z.preprocess(blankToUndefined, z.string().trim().max(100).optional()),
		/** One kind or a comma-separated list. */
		kind: z.preprocess(
			(v) => (typeof v === 'string' && v !== '' ? v.split(',') : undefined),
			z.array(z.enum(PART_KINDS, { error: `kind must be one of ${PART_KINDS.join(', ')}.` })).optional()
		),
		eflMin: num(),
		eflMax: num(),
		diameterMin: num(),
		diameterMax: num(),
		material: z.preprocess(blankToUndefined, z.string().trim().max(32).optional()),
		coating: z.preprocess(blankToUndefined, z.string().trim().max(80).optional()),
		available: z.preprocess(blankToUndefined, z.enum(['true', 'false'], { error: 'available is true or false.' }).optional()),
		archived: z.preprocess(blankToUndefined, z.enum(['exclude', 'include', 'only']).default('exclude')),
		sort: z.preprocess(
			blankToUndefined,
			z.enum(Object.keys(SORTS) as [SortKey, ...SortKey[]], { error: `sort must be one of ${Object.keys(SORTS).join(', ')}.` }).default('sku')
		),
		order: z.preprocess(blankToUndefined, z.enum(['asc', 'desc']).default('asc')),
		page: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).default(1)),
		pageSize: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(MAX_PAGE_SIZE, `pageSize is at most ${MAX_PAGE_SIZE}.`).default(50))
	})
	.strict();
export type ListQuery = z.infer<typeof listQuerySchema>;

/** Parses URL search params into a list query (throws ZodError with field messages). */
export function parseListQuery(params: URLSearchParams): ListQuery {
	return listQuerySchema.parse(Object.fromEntries(params));
}

function escapeLike(s: string) {
	return s.replace(/[\\%_]/g, (c) => '\\' + c);
}

/** The WHERE conditions of a query (shared with the CSV export). */
export function listConditions(q: ListQuery): SQL | undefined {
	const where: (SQL | undefined)[] = [];
	if (q.archived === 'exclude') where.push(isNull(parts.archivedAt));
	if (q.archived === 'only') where.push(isNotNull(parts.archivedAt));
	if (q.q) {
		const text = escapeLike(q.q);
		where.push(or(like(parts.sku, `${text}%`), like(parts.name, `%${text}%`), like(parts.supplierPartNumber, `${text}%`)));
	}
	if (q.kind?.length) where.push(inArray(parts.kind, q.kind));
	if (q.eflMin !== undefined) where.push(gte(parts.paraxialEflMm, q.eflMin));
	if (q.eflMax !== undefined) where.push(lte(parts.paraxialEflMm, q.eflMax));
	if (q.diameterMin !== undefined) where.push(gte(parts.diameterMm, q.diameterMin));
	if (q.diameterMax !== undefined) where.push(lte(parts.diameterMm, q.diameterMax));
	if (q.material) where.push(eq(parts.primaryMaterial, q.material.toLowerCase()));
	if (q.coating) where.push(eq(parts.coating, q.coating));
	if (q.available === 'true') where.push(sql`${availableSql(parts.id)} > 0`);
	return and(...where);
}

/** One page of the catalogue as Part JSON, with the total count of matching parts. */
export async function listParts(
	db: DbOrTx,
	query: Partial<ListQuery> = {}
): Promise<{ items: PartJson[]; total: number; page: number; pageSize: number }> {
	const q = listQuerySchema.parse(query);
	const where = listConditions(q);
	const col = SORTS[q.sort];
	const dir = q.order === 'desc' ? desc : asc;
	// Nulls (parts without an EFL, coating...) go last in either direction; id breaks ties so paging is
	// stable. Not-null columns sort on their index alone.
	const order = NULLABLE_SORTS.has(q.sort) ? [sql`${col} is null`, dir(col), dir(parts.id)] : [dir(col), dir(parts.id)];
	const [rows, [{ n }]] = await Promise.all([
		db
			.select()
			.from(parts)
			.where(where)
			.orderBy(...order)
			.limit(q.pageSize)
			.offset((q.page - 1) * q.pageSize),
		db.select({ n: count() }).from(parts).where(where)
	]);
	return { items: await partsJson(db, rows), total: n, page: q.page, pageSize: q.pageSize };
}

/** Values offered by the catalogue's filter menus (materials and coatings in use). */
export async function filterOptions(db: DbOrTx) {
	const mats = await db
		.selectDistinct({ v: parts.primaryMaterial })
		.from(parts)
		.where(and(isNull(parts.archivedAt), isNotNull(parts.primaryMaterial)))
		.orderBy(parts.primaryMaterial);
	const coats = await db
		.selectDistinct({ v: parts.coating })
		.from(parts)
		.where(and(isNull(parts.archivedAt), isNotNull(parts.coating)))
		.orderBy(parts.coating);
	return { materials: mats.map((m) => m.v!), coatings: coats.map((c) => c.v!), kinds: [...PART_KINDS] };
}
