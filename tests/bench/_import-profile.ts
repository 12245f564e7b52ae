/**
 * Where an import commit's time goes (a helper for work on the importer, not run by `npm run bench`:
 * files starting with `_` are skipped). Commits ROUNDS files of ROWS new parts each (SKUs differ per
 * round) against a throwaway stack and prints, per commit: wall time, rows/s, this process's CPU
 * (user + system), MariaDB's CPU (from /proc), and the statements' round-trip time by kind (time from
 * handing a command to mysql2 to its end, summed over the run; the transaction's statements and the
 * planning's overlap, so the kinds add up to more than the wall time).
 *
 * PROFILE_THREADS=1 prints MariaDB's busiest threads during each commit (a thread per connection, background threads by name).
 * PROFILE_MODE=check times dry runs instead of commits.
 * PROFILE_CPU=1 writes a V8 CPU profile of the last commit to PROFILE_OUT (default /tmp/import-commit.cpuprofile).
 * PROFILE_HEAP=1 writes a sampled allocation profile (garbage included) of the last commit to PROFILE_HEAP_OUT
 * (default /tmp/import-commit.heapprofile).
 * PROFILE_VARIANTS=a,b alternates variants, one commit each in turn: a variant named like a folder of src/lib/server
 * with a service.ts (e.g. a copy of imports/ as it was before a change) runs that folder's importer; b<N> runs
 * batches of N rows; any other name runs imports/, with
 * globalThis.__importVariant set to the name (for a temporary switch in the code under test).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { createRequire } from 'node:module';
import { Session } from 'node:inspector/promises';
import { eq } from 'drizzle-orm';
import { benchDataDir, startBenchStack, stopBenchStack } from './_stack';

const ROWS = Number(process.env.BENCH_IMPORT_ROWS ?? 50_000);
const ROUNDS = Number(process.env.PROFILE_ROUNDS ?? 3);
const MODE = (process.env.PROFILE_MODE ?? 'commit') as 'check' | 'commit';
const VARIANTS = (process.env.PROFILE_VARIANTS ?? 'current').split(',');
const tmp = benchDataDir('glasscrib-profile-import-');

const HEAD = 'sku,name,kind,diameterMm,r1Mm,t1Mm,material1,r2Mm,coating,supplier,supplierPartNumber,unitPrice,leadTimeDays\n';
function line(i: number): string {
	const r = (40 + (i % 900) * 0.25).toFixed(2);
	return `BN-${i},Bench plano-convex ${i},plano-convex,25.4,${r},4,517642,,MgF2,Brightwick Components,BW-BN-${i},${1200 + (i % 300)},${7 + (i % 30)}\n`;
}
async function* csv(from: number, rows: number): AsyncGenerator<Uint8Array> {
	const encoder = new TextEncoder();
	let piece = HEAD;
	for (let i = from; i < from + rows; i++) {
		piece += line(i);
		if (piece.length >= 64 * 1024) {
			yield encoder.encode(piece);
			piece = '';
		}
	}
	if (piece) yield encoder.encode(piece);
}

/** Statement round trips by kind (first words of the SQL). */
const trips = new Map<string, { n: number; ms: number }>();
{
	const require = createRequire(import.meta.url);
	const Base = require(path.join(path.dirname(require.resolve('mysql2')), 'lib/base/connection.js'));
	const add = Base.prototype.addCommand;
	Base.prototype.addCommand = function (cmd: { sql?: string; once: (e: string, f: () => void) => void }) {
		if (typeof cmd.sql === 'string') {
			const words = cmd.sql.replace(/\s+/g, ' ').trim().toLowerCase();
			const kind = /^(insert into [^ ]+|select .*? from [^ ]+|update [^ ]+|delete from [^ ]+|[a-z]+)/.exec(words)?.[0].slice(0, 60) ?? words.slice(0, 40);
			const k = kind.startsWith('select') ? 'select … from' + kind.slice(kind.lastIndexOf(' from') + 5) : kind;
			const t0 = performance.now();
			cmd.once('end', () => {
				const e = trips.get(k) ?? { n: 0, ms: 0 };
				e.n++;
				e.ms += performance.now() - t0;
				trips.set(k, e);
			});
		}
		return add.call(this, cmd);
	};
}

function mariadbPid(): number {
	for (const d of fs.readdirSync('/proc')) {
		if (!/^\d+$/.test(d)) continue;
		try {
			const cmd = fs.readFileSync(`/proc/${d}/cmdline`, 'utf8');
			if (cmd.includes('mariadbd') && cmd.includes(tmp)) return Number(d);
		} catch {
			/* gone */
		}
	}
	throw new Error('mariadbd not found');
}
const TICK_MS = 10; // USER_HZ = 100 on Linux
function procCpuMs(pid: number): number {
	const stat = fs.readFileSync(`/proc/${pid}/stat`, 'utf8');
	const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
	return (Number(f[11]) + Number(f[12])) * TICK_MS;
}

/** CPU ms of each thread of `pid` (MariaDB runs a thread per connection, and its background threads by name). */
function threadCpuMs(pid: number): Map<string, { name: string; ms: number }> {
	const out = new Map<string, { name: string; ms: number }>();
	for (const tid of fs.readdirSync(`/proc/${pid}/task`)) {
		try {
			const stat = fs.readFileSync(`/proc/${pid}/task/${tid}/stat`, 'utf8');
			const name = stat.slice(stat.indexOf('(') + 1, stat.lastIndexOf(')'));
			const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
			out.set(tid, { name, ms: (Number(f[11]) + Number(f[12])) * TICK_MS });
		} catch {
			/* gone */
		}
	}
	return out;
}

try {
	const env = await startBenchStack(tmp);
	const { createDb } = await import('../../src/lib/server/db/client');
	const schema = await import('../../src/lib/server/db/schema');
	const { objectStoreFromEnv } = await import('../../src/lib/server/files/s3');
	// A variant named like a folder of src/lib/server (e.g. a copy of imports/ with the code before a change) runs that folder's importer.
	const services = new Map<string, typeof import('../../src/lib/server/imports/service')>();
	for (const v of VARIANTS) services.set(v, fs.existsSync(new URL(`../../src/lib/server/${v}/service.ts`, import.meta.url)) ? await import(`../../src/lib/server/${v}/service`) : await import('../../src/lib/server/imports/service'));
	const { db, pool } = createDb(env.DATABASE_URL, 5);
	const store = objectStoreFromEnv(env);
	const [{ id: actorId }] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.role, 'stockroom')).limit(1);
	const [brightwick] = await db.select().from(schema.suppliers).where(eq(schema.suppliers.name, 'Brightwick Components'));
	const dbPid = mariadbPid();
	const session = new Session();
	session.connect();
	const results: Record<string, { rps: number[]; node: number[]; maria: number[] }> = {};
	let offset = 0;
	const total = ROUNDS * VARIANTS.length;
	for (let round = 0; round < total; round++) {
		const variant = VARIANTS[round % VARIANTS.length];
		const importsService = services.get(variant)!;
		(globalThis as { __importVariant?: string }).__importVariant = variant;
		const created = await importsService.createImport(db, store, { filename: 'p.csv', file: csv(offset, ROWS), supplierId: brightwick.id, actorId });
		offset += ROWS;
		await importsService.saveMapping(db, created.id, { mapping: created.suggestion.mapping, units: created.suggestion.units, skuPrefix: '', skipRejected: false });
		trips.clear();
		const profile = process.env.PROFILE_CPU === '1' && round === total - 1;
		const heap = process.env.PROFILE_HEAP === '1' && round === total - 1;
		if (heap) {
			await session.post('HeapProfiler.enable');
			await session.post('HeapProfiler.startSampling', { samplingInterval: 16384, includeObjectsCollectedByMajorGC: true, includeObjectsCollectedByMinorGC: true } as never);
		}
		if (profile) {
			await session.post('Profiler.enable');
			await session.post('Profiler.setSamplingInterval', { interval: 200 });
			await session.post('Profiler.start');
		}
		const c0 = process.cpuUsage();
		const m0 = procCpuMs(dbPid);
		const threads0 = threadCpuMs(dbPid);
		const t0 = performance.now();
		const batchRows = /^b(\d+)$/.exec(variant)?.[1];
		const out = await importsService.runNow(db, store, created.id, MODE, actorId, batchRows ? { batchRows: Number(batchRows) } : {});
		const ms = performance.now() - t0;
		const c = process.cpuUsage(c0);
		const maria = procCpuMs(dbPid) - m0;
		const threadMs = [...threadCpuMs(dbPid)].map(([tid, t]) => ({ tid, name: t.name, ms: t.ms - (threads0.get(tid)?.ms ?? 0) })).filter((t) => t.ms > 0);
		if (profile) {
			const { profile: p } = await session.post('Profiler.stop');
			fs.writeFileSync(process.env.PROFILE_OUT ?? '/tmp/import-commit.cpuprofile', JSON.stringify(p));
		}
		if (heap) {
			const { profile: p } = await session.post('HeapProfiler.stopSampling');
			fs.writeFileSync(process.env.PROFILE_HEAP_OUT ?? '/tmp/import-commit.heapprofile', JSON.stringify(p));
		}
		if (out.status === 'failed' || out.created !== ROWS) throw new Error(`commit did not go through: ${JSON.stringify(out)}`);
		const node = (c.user + c.system) / 1000;
		const r = (results[variant] ??= { rps: [], node: [], maria: [] });
		r.rps.push(ROWS / (ms / 1000));
		r.node.push(node);
		r.maria.push(maria);
		console.log(
			`${variant.padEnd(12)} ${MODE} ${(ms / 1000).toFixed(2)} s  ${Math.round(ROWS / (ms / 1000)).toLocaleString('en')} rows/s  node CPU ${(node / 1000).toFixed(2)} s (user ${(c.user / 1e6).toFixed(2)})  MariaDB CPU ${(maria / 1000).toFixed(2)} s  load ${os.loadavg()[0].toFixed(2)}`
		);
		if (process.env.PROFILE_THREADS === '1') {
			console.log('     MariaDB threads (ms):', threadMs.sort((a, b) => b.ms - a.ms).slice(0, 8).map((t) => `${t.name}/${t.tid} ${t.ms}`).join(', '));
		}
		if (process.env.PROFILE_TRIPS !== '0' && round >= total - VARIANTS.length) {
			for (const [k, v] of [...trips].sort((a, b) => b[1].ms - a[1].ms).slice(0, 12)) console.log(`     ${v.ms.toFixed(0).padStart(6)} ms  ${String(v.n).padStart(4)}×  ${k}`);
		}
	}
	const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
	const base = VARIANTS[0];
	for (const v of VARIANTS) {
		const r = results[v];
		const b = results[base];
		console.log(
			`${v.padEnd(12)} median rows/s ${Math.round(median(r.rps))}  node ${(median(r.node) / 1000).toFixed(2)} s  MariaDB ${(median(r.maria) / 1000).toFixed(2)} s  ` +
				`ratios vs ${base}: rows/s ×${(median(r.rps) / median(b.rps)).toFixed(3)}  CPU (node+MariaDB) ×${(median(r.node.map((x, i) => x + r.maria[i])) / median(b.node.map((x, i) => x + b.maria[i]))).toFixed(3)}`
		);
	}
	session.disconnect();
	await pool.end();
} finally {
	await stopBenchStack(tmp);
}
