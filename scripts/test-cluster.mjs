// `npm run test:cluster`: the deployment of `npm run cluster` on free ports in a temp dir (three Galera
// nodes, two app instances, HAProxy, S3 and mail fakes), then the tests in tests/cluster/ against it.
// Ends with "N passed, N failed" and the figures the tests measured.
// `npm run test:cluster -- node-kill` runs only matching files.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import http from 'node:http';
import crypto from 'node:crypto';
import { ensureDependencies } from './lib/deps.mjs';

await ensureDependencies();
const { ROOT, ensureBuild } = await import('./lib/stack.mjs');
const { freePort, run, stopChildren } = await import('./lib/proc.mjs');
const { startClusterStack } = await import('./lib/cluster-stack.mjs');

const filters = process.argv.slice(2);
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'glasscrib-cluster-'));
// The database nodes run as the `mysql` user when we are root: it must be able to reach its data dirs.
fs.chmodSync(tmp, 0o711);
const results = { passed: 0, failed: 0, skipped: 0 };
let exitCode = 0;
let control = null;

let cleaning = null;
function cleanup() {
	cleaning ??= (async () => {
		control?.close();
		await stopChildren();
		if (!process.env.KEEP_TEST_TMP) {
			fs.rmSync(tmp, { recursive: true, force: true });
			fs.rmSync(path.join(ROOT, '.test-builds', path.basename(tmp)), { recursive: true, force: true });
		}
	})();
	return cleaning;
}
for (const signal of ['SIGINT', 'SIGTERM']) {
	process.on(signal, async () => {
		await cleanup();
		process.exit(130);
	});
}

function countReport(file) {
	if (!fs.existsSync(file)) return false;
	const report = JSON.parse(fs.readFileSync(file, 'utf8'));
	results.passed += report.numPassedTests ?? 0;
	results.failed += report.numFailedTests ?? 0;
	results.skipped += (report.numPendingTests ?? 0) + (report.numTodoTests ?? 0);
	for (const suite of report.testResults ?? []) {
		if (suite.status === 'failed' && (suite.assertionResults ?? []).every((a) => a.status !== 'failed')) results.failed += 1;
	}
	return true;
}

/**
 * A small control service on loopback for the tests: they ask it to kill or restart a database node
 * (the nodes are children of this process, so they stop with it whatever the tests do).
 */
function startControl(galera, port) {
	const server = http.createServer(async (req, res) => {
		const m = /^\/nodes\/(\d)\/(kill|start|state)$/.exec(req.url ?? '');
		const i = m ? Number(m[1]) - 1 : -1;
		if (!m || i < 0 || i >= galera.ports.length) {
			res.writeHead(404).end();
			return;
		}
		try {
			if (m[2] === 'kill') await galera.kill(i);
			if (m[2] === 'start') await galera.startNode(i, { timeoutMs: 240_000 });
			res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify({ state: await galera.state(i) }));
		} catch (err) {
			res.writeHead(500, { 'content-type': 'application/json' }).end(JSON.stringify({ error: err.message }));
		}
	});
	server.requestTimeout = 300_000;
	return new Promise((resolve) => server.listen(port, '127.0.0.1', () => resolve(server)));
}

try {
	const ports = {}; // all free ones, chosen as each service starts
	const secrets = {
		AUTH_PEPPER: crypto.randomBytes(24).toString('base64url'),
		DB_PASSWORD: crypto.randomBytes(12).toString('base64url'),
		DEMO_PASSWORD: 'tarnwell-bench-2026'
	};
	console.log(`Cluster test services in ${tmp}`);
	await run('npx', ['svelte-kit', 'sync'], { cwd: ROOT, quiet: true });
	console.log('== build ==');
	// A build of our own (several runs may share the checkout); CLUSTER_REUSE_BUILD=1 uses build/ instead,
	// rebuilt only when a source changed (quicker when re-running the tests alone).
	const buildRoot = path.join(ROOT, '.test-builds', path.basename(tmp));
	let buildDir = path.join(buildRoot, 'app');
	if (process.env.CLUSTER_REUSE_BUILD) {
		buildDir = path.join(ROOT, 'build');
		await ensureBuild({ quiet: true });
	} else await ensureBuild({ force: true, quiet: true, buildDir, kitDir: path.join(buildRoot, 'kit') });
	console.log('== cluster ==');
	const stack = await startClusterStack({ dir: tmp, ports, logDir: path.join(tmp, 'logs'), secrets, buildDir, say: (m) => console.log(m) });
	const controlPort = await freePort();
	control = await startControl(stack.galera, controlPort);

	const figures = path.join(tmp, 'figures.json');
	const testEnv = {
		...stack.env,
		DATABASE_URL: stack.urls[0],
		CLUSTER_NODE_URLS: JSON.stringify(stack.urls),
		CLUSTER_APP_URLS: JSON.stringify(stack.apps.map((a) => a.origin)),
		CLUSTER_APP_NODES: JSON.stringify(stack.apps.map((a) => a.node + 1)),
		CLUSTER_CONTROL: `http://127.0.0.1:${controlPort}`,
		CLUSTER_FIGURES: figures,
		APP_URL: stack.lb.origin,
		TEST_TMP: tmp,
		FORCE_COLOR: '0'
	};
	console.log('\n== vitest: cluster ==');
	const report = path.join(tmp, 'vitest-cluster.json');
	try {
		await run(
			'npx',
			['vitest', 'run', '--config', 'tests/cluster/vitest.config.ts', '--reporter=default', '--reporter=json', `--outputFile.json=${report}`, '--passWithNoTests', ...filters],
			{ cwd: ROOT, env: testEnv }
		);
	} catch {
		exitCode = 1;
	}
	if (!countReport(report)) {
		results.failed += 1;
		exitCode = 1;
	}
	if (fs.existsSync(figures)) {
		console.log('\n== figures (this run, this machine) ==');
		for (const line of fs.readFileSync(figures, 'utf8').trim().split('\n')) {
			const f = JSON.parse(line);
			console.log(`- ${f.what}: ${f.value}${f.note ? ` (${f.note})` : ''}`);
		}
	}
	if (exitCode !== 0) console.log(`\nService and app logs: ${path.join(tmp, 'logs')} (kept only with KEEP_TEST_TMP=1)`);
} catch (err) {
	console.error(`\nThe cluster test run could not set up: ${err.stack ?? err.message}`);
	results.failed += 1;
	exitCode = 1;
} finally {
	await cleanup();
}
if (results.failed > 0) exitCode = 1;
console.log(`\n${results.passed} passed, ${results.failed} failed${results.skipped ? `, ${results.skipped} skipped` : ''}`);
process.exit(exitCode);
