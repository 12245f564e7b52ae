/**
 * Import throughput: a generated 50,000-row CSV (invented plano-convex parts, export format) goes
 * through the whole importer against a throwaway MariaDB and s3rver started for this run: upload
 * check and store, dry run (parse, validate with the catalogue's part schema), then commit
 * (parse, validate, batched multi-row upserts in one transaction). Target (issue 6): at least
 * 10,000 rows/s, with memory that does not grow with the file. The file itself is made as it is read
 * and streamed into the importer (no whole copy in memory here either).
 *
 * Memory is sampled every 20 ms during each run (heap used and RSS); "growth" compares the
 * peak of the second half of the run with the peak of the first half. Those peaks include garbage
 * not yet collected, so the bench also forces a full GC after the batches at 1/4, 1/2, 3/4 and
 * the end of each run and reports the heap still in use then ("retained"): what the run holds
 * on to. The pauses of those forced GCs are taken out of the run's time (and printed).
 *
 * Prints human lines and, last, one JSON line: {"bench":"import-50k",...}
 */
import v8 from 'node:v8';
import vm from 'node:vm';
import { eq } from 'drizzle-orm';
import { benchDataDir, startBenchStack, stopBenchStack } from './_stack';

const ROWS = Number(process.env.BENCH_IMPORT_ROWS ?? 50_000);
v8.setFlagsFromString('--expose-gc');
const gc = vm.runInNewContext('gc') as () => void;
const tmp = benchDataDir('glasscrib-bench-import-');

const HEAD = 'sku,name,kind,diameterMm,r1Mm,t1Mm,material1,r2Mm,coating,supplier,supplierPartNumber,unitPrice,leadTimeDays\n';
function line(i: number): string {
	const r = (40 + (i % 900) * 0.25).toFixed(2);
	return `BN-${i},Bench plano-convex ${i},plano-convex,25.4,${r},4,517642,,MgF2,Brightwick Components,BW-BN-${i},${1200 + (i % 300)},${7 + (i % 30)}\n`;
}
/** The file as a stream of 64 KB pieces, made as it is read: the bench never holds it whole either. */
async function* csv(rows: number): AsyncGenerator<Uint8Array> {
	const encoder = new TextEncoder();
	let piece = HEAD;
	for (let i = 0; i < rows; i++) {
		piece += line(i);
		if (piece.length >= 64 * 1024) {
			yield encoder.encode(piece);
			piece = '';
		}
	}
	if (piece) yield encoder.encode(piece);
}

function sampler() {
	const samples: { t: number; heap: number; rss: number }[] = [];
	const t0 = performance.now();
	const timer = setInterval(() => {
		const m = process.memoryUsage();
		samples.push({ t: performance.now() - t0, heap: m.heapUsed, rss: m.rss });
	}, 20);
	return {
		stop() {
			clearInterval(timer);
			const half = Math.floor(samples.length / 2);
			const peak = (xs: typeof samples, k: 'heap' | 'rss') => Math.max(0, ...xs.map((s) => s[k]));
			return {
				peakHeapMb: peak(samples, 'heap') / 2 ** 20,
				peakRssMb: peak(samples, 'rss') / 2 ** 20,
				firstHalfPeakHeapMb: peak(samples.slice(0, half), 'heap') / 2 ** 20,
				secondHalfPeakHeapMb: peak(samples.slice(half), 'heap') / 2 ** 20
			};
		}
	};
}

try {
	const env = await startBenchStack(tmp);
	// Imported after the environment exists (the modules read it).
	const { createDb } = await import('../../src/lib/server/db/client');
	const schema = await import('../../src/lib/server/db/schema');
	const { objectStoreFromEnv } = await import('../../src/lib/server/files/s3');
	const importsService = await import('../../src/lib/server/imports/service');
	const { BATCH_ROWS } = await import('../../src/lib/server/imports/run');
	const { db, pool } = createDb(env.DATABASE_URL, 5);
	const store = objectStoreFromEnv(env);
	const [{ id: actorId }] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.role, 'stockroom')).limit(1);
	const [brightwick] = await db.select().from(schema.suppliers).where(eq(schema.suppliers.name, 'Brightwick Components'));

	gc();
	const uploadMem = sampler();
	let t = performance.now();
	const created = await importsService.createImport(db, store, { filename: 'bench.csv', file: csv(ROWS), supplierId: brightwick.id, actorId });
	const uploadMs = performance.now() - t;
	const upload = uploadMem.stop();
	const [{ sizeBytes }] = await db.select({ sizeBytes: schema.imports.sizeBytes }).from(schema.imports).where(eq(schema.imports.id, created.id));
	console.log(`${ROWS.toLocaleString('en')} rows, ${(sizeBytes / 2 ** 20).toFixed(1)} MB`);
	await importsService.saveMapping(db, created.id, { mapping: created.suggestion.mapping, units: created.suggestion.units, skuPrefix: '', skipRejected: false });

	const results: Record<string, { ms: number; rowsPerSecond: number; mem: ReturnType<ReturnType<typeof sampler>['stop']>; retainedMb: number[]; probeMs: number }> = {};
	const batches = Math.ceil(ROWS / BATCH_ROWS);
	// BENCH_IMPORT_GC_PROBE=0 leaves the probes out (the peaks then show when V8 collects on its own).
	const probeAt = new Set(process.env.BENCH_IMPORT_GC_PROBE === '0' ? [] : [1, 2, 3, 4].map((q) => Math.max(1, Math.round((batches * q) / 4))));
	for (const mode of ['check', 'commit'] as const) {
		gc();
		const retainedMb: number[] = [];
		let probeMs = 0;
		const afterBatch = ({ batch }: { batch: number }) => {
			if (!probeAt.has(batch)) return;
			const t0 = performance.now();
			gc();
			retainedMb.push(process.memoryUsage().heapUsed / 2 ** 20);
			probeMs += performance.now() - t0;
		};
		const mem = sampler();
		t = performance.now();
		const out = await importsService.runNow(db, store, created.id, mode, actorId, { hooks: { afterBatch } });
		const ms = performance.now() - t - probeMs;
		const m = mem.stop();
		if (out.status === 'failed' || out.created !== ROWS) throw new Error(`${mode} did not go through: ${JSON.stringify(out)}`);
		results[mode] = { ms, rowsPerSecond: ROWS / (ms / 1000), mem: m, retainedMb, probeMs };
		console.log(
			`${mode.padEnd(6)} ${(ms / 1000).toFixed(2)} s  ${Math.round(ROWS / (ms / 1000)).toLocaleString('en')} rows/s  ` +
				`peak heap ${m.peakHeapMb.toFixed(0)} MB (1st half ${m.firstHalfPeakHeapMb.toFixed(0)}, 2nd half ${m.secondHalfPeakHeapMb.toFixed(0)}), peak RSS ${m.peakRssMb.toFixed(0)} MB`
		);
		console.log(
			`       retained heap after a full GC at 1/4, 1/2, 3/4, end: ${retainedMb.map((x) => x.toFixed(1)).join(', ')} MB ` + `(forced GC pauses ${probeMs.toFixed(0)} ms, not counted)`
		);
	}
	console.log(
		`upload  ${(uploadMs / 1000).toFixed(2)} s  streamed to a temporary file, checked, stored in S3: peak heap ${upload.peakHeapMb.toFixed(0)} MB ` +
			`(1st half ${upload.firstHalfPeakHeapMb.toFixed(0)}, 2nd half ${upload.secondHalfPeakHeapMb.toFixed(0)})`
	);
	const target = 10_000;
	const fast = results.commit.rowsPerSecond >= target && results.check.rowsPerSecond >= target;
	// Flat memory: what a run holds after a full GC may not rise from the first probe to the last by more than
	// FLAT_MB (a few batches' worth of garbage the GC keeps for its own reasons; a per-row cost of 50 bytes would
	// already add 2 MB over 50,000 rows).
	const FLAT_MB = 1.5;
	const growth = (xs: number[]) => (xs.length > 1 ? Math.max(...xs.slice(1)) - xs[0] : 0);
	const flat = growth(results.check.retainedMb) <= FLAT_MB && growth(results.commit.retainedMb) <= FLAT_MB;
	console.log(
		`retained heap growth from 1/4 to the end: check ${growth(results.check.retainedMb).toFixed(1)} MB, commit ${growth(results.commit.retainedMb).toFixed(1)} MB ` +
			`(${flat ? 'flat' : 'GROWS'}: limit ${FLAT_MB} MB)`
	);
	const ok = fast && flat;
	console.log(ok ? `targets met (≥ ${target.toLocaleString('en')} rows/s, memory flat)` : `BELOW TARGET (${target.toLocaleString('en')} rows/s, flat memory)`);
	await pool.end();
	console.log(
		JSON.stringify({
			bench: 'import-50k',
			rows: ROWS,
			fileMb: +(sizeBytes / 2 ** 20).toFixed(2),
			uploadMs: Math.round(uploadMs),
			uploadPeakHeapMb: Math.round(upload.peakHeapMb),
			checkRowsPerSecond: Math.round(results.check.rowsPerSecond),
			commitRowsPerSecond: Math.round(results.commit.rowsPerSecond),
			checkPeakHeapMb: Math.round(results.check.mem.peakHeapMb),
			commitPeakHeapMb: Math.round(results.commit.mem.peakHeapMb),
			checkHeapHalvesMb: [Math.round(results.check.mem.firstHalfPeakHeapMb), Math.round(results.check.mem.secondHalfPeakHeapMb)],
			commitHeapHalvesMb: [Math.round(results.commit.mem.firstHalfPeakHeapMb), Math.round(results.commit.mem.secondHalfPeakHeapMb)],
			checkRetainedHeapMb: results.check.retainedMb.map((x) => +x.toFixed(1)),
			commitRetainedHeapMb: results.commit.retainedMb.map((x) => +x.toFixed(1)),
			peakRssMb: Math.round(Math.max(results.check.mem.peakRssMb, results.commit.mem.peakRssMb)),
			targetRowsPerSecond: target,
			retainedGrowthMb: [+growth(results.check.retainedMb).toFixed(1), +growth(results.commit.retainedMb).toFixed(1)],
			memoryFlat: flat,
			targetMet: ok
		})
	);
	process.exitCode = ok ? 0 : 1;
} finally {
	await stopBenchStack(tmp);
}
