/**
 * The catalogue list: server-side filter, sort and paging over `parts`, for
 * `GET /api/v1/parts` and the `/parts` page. Measured at 100,000 parts by
 * `npm run bench -- catalogue` (tests/bench/catalogue-list.ts); what keeps it fast:
 *
 * - Every sort runs on an index: a unique SKU sorts on its index alone; other sorts add `id` as the
 *   tie-breaker, which InnoDB secondary indexes carry anyway. Nullable sort columns (EFL, material,
 *   coating) keep nulls last in both directions without an `ORDER BY col IS NULL` expression (that
 *   defeats the index and sorts the whole table): the page is read from the non-null rows first and
 *   topped up from the null rows when it runs past them.
 * - "Available only": the page query checks each row it examines with two correlated index lookups
 *   (it stops after a page); the count uses a materialised set of available part ids (usable stock
 *   grouped once on the covering index `stock_usable_part_idx`, active reservations grouped once)
 *   instead of two lookups for each of 100,000 rows.
 * - The text query keeps its meaning (SKU or supplier part number starts with it, or the name
 *   contains it), but when the query has more than one word, the FULLTEXT index `parts_text_ft`
 *   first narrows the rows to those holding every later word as a word prefix, a condition every
 *   match meets (see `fulltextPrefilter`).
 * - `total` is an exact count of the matching parts with the same conditions.
 * The EFL filter and sort use the stored `paraxial_efl_mm` (EFL at the lab's default wavelength),
 * so they need no optics at query time.
 */
import { and, asc, count, desc, eq, gte, inArray, isNotNull, isNull, like, lte, or, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { text } from '$lib/input';
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
		q: z.preprocess(blankToUndefined, text().trim().max(100).optional()),
		/** One kind or a comma-separated list. */
		kind: z.preprocess(
			(v) => (typeof v === 'string' && v !== '' ? v.split(',') : Array.isArray(v) && v.length ? v : undefined),
			z.array(z.enum(PART_KINDS, { error: `kind must be one of ${PART_KINDS.join(', ')}.` })).optional()
		),
		eflMin: num(),
		eflMax: num(),
		diameterMin: num(),
		diameterMax: num(),
		material: z.preprocess(blankToUndefined, text().trim().max(32).optional()),
		coating: z.preprocess(blankToUndefined, text().trim().max(80).optional()),
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

/**
 * InnoDB's built-in full-text stopwords (MariaDB's default list): they are not indexed, so a word
 * that is a prefix of one of them cannot be used as a `word*` term.
 */
const FT_STOPWORDS = 'a about an are as at be by com de en for from how i in is it la of on or that the this to was what when where who will with und www'.split(' ');
/** innodb_ft_min_token_size / innodb_ft_max_token_size (defaults; our servers keep them). */
const FT_MIN = 3;
const FT_MAX = 84;

/**
 * A FULLTEXT boolean-mode term list that every row matching the text query `q` satisfies, or null
 * when there is none. Split `q` at characters that are word separators for InnoDB full-text
 * parsing too (space, - . / , : ; parentheses). A match has `q` as a substring of the name or as
 * the start of the SKU or supplier part number; either way each word of `q` after the first begins a
 * word there (the first may sit inside a word, as in "ano-convex"). So `+word*` for those later
 * words is a necessary condition, and the LIKE conditions still decide. Only plain ASCII words of
 * indexable length that do not begin a stopword are used.
 */
export function fulltextPrefilter(q: string): string | null {
	const words = q.split(/[\s\-./,:;()]+/).slice(1);
	const usable = words.filter(
		(w) => /^[A-Za-z0-9]+$/.test(w) && w.length >= FT_MIN && w.length <= FT_MAX && !FT_STOPWORDS.some((s) => s.startsWith(w.toLowerCase()))
	);
	return usable.length ? [...new Set(usable)].map((w) => `+${w}*`).join(' ') : null;
}

/**
 * Parts with available units (usable on hand − active unexpired reservations > 0), as one
 * uncorrelated subquery that MariaDB materialises once per query; the same definition as
 * `stock/availability.ts`.
 */
function availablePartIds(): SQL {
	return sql`${parts.id} in (
		select s.part_id from stock s
		left join (
			select r.part_id, sum(r.quantity) as q from reservations r
			where r.status = 'active' and r.until > utc_timestamp()
			group by r.part_id
		) rr on rr.part_id = s.part_id
		where s.\`condition\` = 'usable'
		group by s.part_id
		having sum(s.quantity) > coalesce(max(rr.q), 0)
	)`;
}

/**
 * The WHERE conditions of a query (shared with the CSV export). `availability` picks how "available
 * only" is written: 'correlated' (two index lookups per row examined: best when the query stops after
 * a page of rows) or 'set' (the available parts materialised once: best for counting all matches).
 * Both mean the same.
 */
export function listConditions(q: ListQuery, availability: 'correlated' | 'set' = 'set'): SQL | undefined {
	const where: (SQL | undefined)[] = [];
	if (q.archived === 'exclude') where.push(isNull(parts.archivedAt));
	if (q.archived === 'only') where.push(isNotNull(parts.archivedAt));
	if (q.q) {
		const text = escapeLike(q.q);
		const ft = fulltextPrefilter(q.q);
		if (ft) where.push(sql`match(${parts.sku}, ${parts.name}, ${parts.supplierPartNumber}) against (${ft} in boolean mode)`);
		where.push(or(like(parts.sku, `${text}%`), like(parts.name, `%${text}%`), like(parts.supplierPartNumber, `${text}%`)));
	}
	if (q.kind?.length) where.push(inArray(parts.kind, q.kind));
	if (q.eflMin !== undefined) where.push(gte(parts.paraxialEflMm, q.eflMin));
	if (q.eflMax !== undefined) where.push(lte(parts.paraxialEflMm, q.eflMax));
	if (q.diameterMin !== undefined) where.push(gte(parts.diameterMm, q.diameterMin));
	if (q.diameterMax !== undefined) where.push(lte(parts.diameterMm, q.diameterMax));
	if (q.material) where.push(eq(parts.primaryMaterial, q.material.toLowerCase()));
	if (q.coating) where.push(eq(parts.coating, q.coating));
	if (q.available === 'true') where.push(availability === 'set' ? availablePartIds() : sql`${availableSql(parts.id)} > 0`);
	return and(...where);
}

/** One page of the catalogue as Part JSON, with the total count of matching parts. */
export async function listParts(
	db: DbOrTx,
	query: Partial<ListQuery> | Record<string, unknown> = {}
): Promise<{ items: PartJson[]; total: number; page: number; pageSize: number }> {
	const q = listQuerySchema.parse(query);
	const where = listConditions(q, 'correlated');
	const col = SORTS[q.sort];
	const dir = q.order === 'desc' ? desc : asc;
	const offset = (q.page - 1) * q.pageSize;
	// Ids first (from the index when it covers the query: deep pages skip index entries, not rows), then the rows.
	const page = async (cond: SQL | undefined, order: SQL[], limit: number, skip: number) => {
		const ids = (await db.select({ id: parts.id }).from(parts).where(cond).orderBy(...order).limit(limit).offset(skip)).map((r) => r.id);
		if (!ids.length) return [];
		const byId = new Map((await db.select().from(parts).where(inArray(parts.id, ids))).map((r) => [r.id, r]));
		return ids.map((id) => byId.get(id)!);
	};
	const countOf = async (cond: SQL | undefined) => (await db.select({ n: count() }).from(parts).where(cond))[0].n;

	let rowsPromise: Promise<(typeof parts.$inferSelect)[]>;
	if (q.sort === 'sku') {
		// Unique: no tie-breaker, so the unique index gives the order (with `, id` MariaDB sorts the table).
		rowsPromise = page(where, [dir(col)], q.pageSize, offset);
	} else if (!NULLABLE_SORTS.has(q.sort)) {
		rowsPromise = page(where, [dir(col), dir(parts.id)], q.pageSize, offset);
	} else {
		// Nulls last in either direction: non-null rows on the column's index, then the null rows by id.
		rowsPromise = (async () => {
			const head = await page(and(where, isNotNull(col)), [dir(col), dir(parts.id)], q.pageSize, offset);
			if (head.length === q.pageSize) return head;
			const nonNull = head.length > 0 ? offset + head.length : await countOf(and(listConditions(q, 'set'), isNotNull(col)));
			const tail = await page(and(where, isNull(col)), [dir(parts.id)], q.pageSize - head.length, Math.max(0, offset - nonNull));
			return [...head, ...tail];
		})();
	}
	const [rows, total] = await Promise.all([rowsPromise, countOf(listConditions(q, 'set'))]);
	return { items: await partsJson(db, rows), total, page: q.page, pageSize: q.pageSize };
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
