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
 * - The text query matches word by word, in any order (`textCondition`): each word is looked for in
 *   SKU, name, supplier part number, coating, material and kind, a number also as the focal length or
 *   diameter. That reads every row of the catalogue (no index serves "contains"); measured by the bench.
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
import { kindLabel } from '$lib/format';
import { partsJson, type PartJson } from './part-json';
import { activeReservationAs } from '$lib/server/stock/active-reservation';

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

/** One word of a text query: a number (a focal length or diameter in mm; `text` its digits) or a piece of text. */
export type TextTerm = { number: number; signed: boolean; text: string } | { number: null; text: string };

/**
 * The words of a catalogue text query, each to be matched on its own (any order). A word that reads as
 * a length ("100", "-50", "25.4", "100mm", "f=100", "Ø25.4") is a number; the rest is text, lower-cased.
 * Lone signs and "f", "mm", "=" carry no meaning apart from a number and are dropped.
 */
export function textTerms(q: string): TextTerm[] {
	const out: TextTerm[] = [];
	for (const raw of q.toLowerCase().split(/[\s,;]+/)) {
		const w = raw.replace(/^(f=|ø|⌀)/, '').replace(/mm$/, '');
		if (!w || w === '=' || w === 'f' || w === '-' || w === '+') continue;
		if (/^[-+]?\d+(\.\d+)?$/.test(w)) out.push({ number: Number(w), signed: /^[-+]/.test(w), text: w.replace(/^[-+]/, '') });
		else out.push({ number: null, text: raw });
	}
	return out.slice(0, 8);
}

/**
 * InnoDB's built-in full-text stopwords (MariaDB's default list) and token sizes: a word that is a prefix
 * of a stopword, or shorter than 3 characters, cannot be a `word*` term.
 */
const FT_STOPWORDS = 'a about an are as at be by com de en for from how i in is it la of on or that the this to was what when where who will with und www'.split(' ');

/**
 * FULLTEXT boolean terms every part whose SKU or supplier part number starts with `code` has: the pieces
 * after the first (split where InnoDB splits words) each begin a word there. Null when none is usable.
 */
export function codePrefilter(code: string): string | null {
	const words = code.split(/[\s\-./,:;()]+/).slice(1);
	const usable = words.filter((w) => /^[A-Za-z0-9]+$/.test(w) && w.length >= 3 && w.length <= 84 && !FT_STOPWORDS.some((s) => s.startsWith(w.toLowerCase())));
	return usable.length ? [...new Set(usable)].map((w) => `+${w}*`).join(' ') : null;
}

/** Part kinds whose code or label holds the text ("doublet" → achromatic-doublet, "convex" → plano-convex, biconvex). */
function kindsMatching(text: string): (typeof PART_KINDS)[number][] {
	return PART_KINDS.filter((k) => k.includes(text) || kindLabel(k).toLowerCase().includes(text));
}

/**
 * The condition of a text query: every word must match somewhere (in any order). A text word matches
 * when the SKU, name, supplier part number or coating contains it, the material starts with it, or the
 * kind's name holds it. A number matches the focal length (the stored EFL at the lab's wavelength within
 * 1 %, either sign unless the word has one) or the diameter. So "doublet 100" finds the 100 mm doublets
 * and "100 doublet" the same. A single code-like word is a SKU / supplier part number prefix.
 */
function textCondition(q: string): SQL | undefined {
	const terms = textTerms(q);
	if (!terms.length) return sql`false`;
	// One code-like word ("TW-A1D2", "BK-0420": letters, a dash, digits) is a stock or supplier number:
	// read as a prefix of the SKU or supplier part number, which their indexes answer.
	if (terms.length === 1 && terms[0].number === null && /[a-z]/.test(terms[0].text) && /\d/.test(terms[0].text) && terms[0].text.includes('-')) {
		const prefix = `${escapeLike(terms[0].text)}%`;
		// The FULLTEXT index narrows first: every later piece of the code begins a word of the SKU or part number.
		const ft = codePrefilter(terms[0].text);
		return and(
			ft ? sql`match(${parts.sku}, ${parts.name}, ${parts.supplierPartNumber}) against (${ft} in boolean mode)` : undefined,
			or(like(parts.sku, prefix), like(parts.supplierPartNumber, prefix))
		);
	}
	return and(
		...terms.map((t) => {
			if (t.number !== null) {
				// The stored EFL (every part has one: prescription, measurement or datasheet) within 1 %, and the
				// diameter: index ranges (parts_efl_idx, parts_diameter_idx), so a number narrows the query fast.
				const n = Math.abs(t.number);
				const [lo, hi] = [n * 0.99, n * 1.01];
				const efl = t.signed
					? t.number < 0
						? sql`${parts.paraxialEflMm} between ${-hi} and ${-lo}`
						: sql`${parts.paraxialEflMm} between ${lo} and ${hi}`
					: or(sql`${parts.paraxialEflMm} between ${lo} and ${hi}`, sql`${parts.paraxialEflMm} between ${-hi} and ${-lo}`);
				return t.signed ? efl : or(efl, eq(parts.diameterMm, n));
			}
			const pattern = `%${escapeLike(t.text)}%`;
			const kinds = kindsMatching(t.text);
			return or(
				like(parts.sku, pattern),
				like(parts.supplierPartNumber, pattern),
				like(parts.name, pattern),
				like(parts.coating, pattern),
				like(parts.primaryMaterial, `${escapeLike(t.text)}%`),
				kinds.length ? inArray(parts.kind, kinds) : undefined
			);
		})
	);
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
			where ${activeReservationAs('r')}
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
		where.push(textCondition(q.q));
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
