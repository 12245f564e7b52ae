/**
 * What Galera asks of an application, checked against the cluster and the source tree:
 * - every table is InnoDB with a primary key (Galera replicates InnoDB row changes by key; a table
 *   without one is replicated row by row with full scans, or not safely at all);
 * - no LOCK TABLES / GET_LOCK (neither is replicated: they lock only the local node);
 * - auto-increment values are spaced by the cluster size on every node, and the import's block of
 *   new ids (INSERT ... RETURNING, `bulk-sql.insertReturning`) are still right then.
 * (MariaDB Knowledge Base, "Galera Cluster Known Limitations" and "wsrep_auto_increment_control",
 * from memory.)
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { inArray, like, sql } from 'drizzle-orm';
import * as t from '../../src/lib/server/db/schema';
import { insertReturning } from '../../src/lib/server/imports/bulk-sql';
import { nodeDb, nodeUrls } from './support';

const nodes = nodeUrls.map((_, i) => nodeDb(i + 1, 2));
afterAll(async () => {
	for (const n of nodes) await n.pool.end();
});

const ROOT = path.resolve(__dirname, '../..');

function sourceFiles(dir: string, out: string[] = []): string[] {
	for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
		const p = path.join(dir, e.name);
		if (e.isDirectory()) sourceFiles(p, out);
		else if (/\.(ts|js|mjs|svelte|sql)$/.test(e.name)) out.push(p);
	}
	return out;
}

describe('the schema on Galera', () => {
	it('every table (drizzle’s own migrations table too) is InnoDB and has a primary key', async () => {
		const { db } = nodes[0];
		const [tables] = (await db.execute(sql`
			select t.table_name as name, t.engine as engine,
				(select count(*) from information_schema.table_constraints c
					where c.table_schema = t.table_schema and c.table_name = t.table_name and c.constraint_type = 'PRIMARY KEY') as pk
			from information_schema.tables t
			where t.table_schema = database() and t.table_type = 'BASE TABLE'`)) as unknown as [{ name: string; engine: string; pk: number }[]];
		const names = tables.map((r) => r.name);
		expect(names).toContain('__drizzle_migrations');
		expect(names).toContain('stock');
		expect(names.length).toBeGreaterThan(20);
		expect(tables.filter((r) => Number(r.pk) !== 1).map((r) => r.name)).toEqual([]);
		expect(tables.filter((r) => r.engine !== 'InnoDB').map((r) => r.name)).toEqual([]);
	});

	it('nothing in the source takes LOCK TABLES or GET_LOCK (neither replicates)', () => {
		const files = ['src', 'scripts', 'seed', 'drizzle'].flatMap((d) => sourceFiles(path.join(ROOT, d)));
		expect(files.length).toBeGreaterThan(100);
		const hits = files.filter((f) => /\bLOCK\s+TABLES?\b|\bGET_LOCK\s*\(|\bRELEASE_LOCK\s*\(/i.test(fs.readFileSync(f, 'utf8')));
		expect(hits.map((f) => path.relative(ROOT, f))).toEqual([]);
	});

	it('every node spaces auto-increment values by 3 with its own offset, lock mode 2', async () => {
		const seen = [];
		for (const { db } of nodes) {
			const [[row]] = (await db.execute(
				sql`select @@auto_increment_increment as step, @@auto_increment_offset as ofs, @@innodb_autoinc_lock_mode as mode, @@wsrep_on as wsrep`
			)) as unknown as [{ step: number; ofs: number; mode: number; wsrep: number }[]];
			seen.push({ step: Number(row.step), offset: Number(row.ofs), mode: Number(row.mode), wsrep: Number(row.wsrep) });
		}
		expect(seen.map((s) => s.step)).toEqual([3, 3, 3]);
		expect(new Set(seen.map((s) => s.offset)).size).toBe(3);
		expect(seen.map((s) => s.mode)).toEqual([2, 2, 2]);
		expect(seen.map((s) => s.wsrep)).toEqual([1, 1, 1]);
	});
});

describe('the import’s new ids with an auto-increment step of 3', () => {
	const tag = `GI${Date.now().toString(36).toUpperCase()}`;
	afterAll(async () => {
		await nodes[0].db.delete(t.parts).where(like(t.parts.sku, `${tag}%`));
	});

	it('INSERT ... RETURNING gives each row the id MariaDB gave it (multi-row INSERT on node 2)', async () => {
		const { db } = nodes[1];
		const skus = Array.from({ length: 7 }, (_, i) => `${tag}-${i}`);
		const ids = await db.transaction(async (tx) => {
			const back = await insertReturning(
				tx,
				t.parts,
				['sku', 'name', 'kind', 'diameterMm'],
				skus.map((s) => ({ sku: s, name: 'Id check ' + s, kind: 'other', diameterMm: 25 })),
				['id', 'sku']
			);
			expect(back.map((r) => r.sku).sort()).toEqual([...skus].sort());
			return skus.map((s) => Number(back.find((r) => r.sku === s)!.id));
		});
		const rows = await db.select({ id: t.parts.id, sku: t.parts.sku }).from(t.parts).where(inArray(t.parts.sku, skus));
		const bySku = new Map(rows.map((r) => [r.sku, r.id]));
		expect(ids).toEqual(skus.map((s) => bySku.get(s)));
		// The block is not consecutive here, so a writer that assumed +1 steps would have been wrong.
		const sorted = [...ids].sort((a, b) => a - b);
		expect(sorted.slice(1).map((id, k) => id - sorted[k])).toEqual(Array(6).fill(3));
	});
});
