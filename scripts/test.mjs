// `npm test`: a throwaway MariaDB, S3 fake and mail fake on free ports in a temp dir, the built app,
// then svelte-check and vitest (unit, integration, e2e in Chromium). Ends with "N passed, N failed".
// `npm test -- tests/unit/optics` runs only matching test files (services still start).
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import { ensureDependencies } from './lib/deps.mjs';

await ensureDependencies();
const { ROOT, startStack, ensureBuild, startApp } = await import('./lib/stack.mjs');
const { freePort, run, stopChildren } = await import('./lib/proc.mjs');

const filters = process.argv.slice(2);
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'glasscrib-test-'));
const results = { passed: 0, failed: 0, skipped: 0 };
let exitCode = 0;

async function cleanup() {
	await stopChildren();
	if (!process.env.KEEP_TEST_TMP) {
		fs.rmSync(tmp, { recursive: true, force: true });
		fs.rmSync(path.join(ROOT, '.test-builds', path.basename(tmp)), { recursive: true, force: true });
	}
}
process.on('SIGINT', async () => {
	await cleanup();
	process.exit(130);
});

function countReport(file) {
	if (!fs.existsSync(file)) return false;
	const report = JSON.parse(fs.readFileSync(file, 'utf8'));
	results.passed += report.numPassedTests ?? 0;
	results.failed += report.numFailedTests ?? 0;
	results.skipped += (report.numPendingTests ?? 0) + (report.numTodoTests ?? 0);
	// A file that fails to load counts as a failure even when it has no test.
	for (const suite of report.testResults ?? []) {
		if (suite.status === 'failed' && (suite.assertionResults ?? []).every((a) => a.status !== 'failed')) results.failed += 1;
	}
	return true;
}

function chromiumPath() {
	for (const p of [process.env.CHROMIUM_PATH, '/usr/bin/chromium', '/usr/bin/chromium-browser']) if (p && fs.existsSync(p)) return p;
	return null;
}

try {
	const ports = { db: await freePort(), s3: await freePort(), smtp: await freePort() };
	const secrets = {
		AUTH_PEPPER: crypto.randomBytes(24).toString('base64url'),
		DB_PASSWORD: crypto.randomBytes(12).toString('base64url'),
		DEMO_PASSWORD: 'tarnwell-bench-2026'
	};
	console.log(`Test services in ${tmp}`);
	const env = await startStack({ dataDir: tmp, ports, logDir: path.join(tmp, 'logs'), secrets, quiet: true });

	// The build uses its own kit dir, but tsconfig.json extends .svelte-kit/tsconfig.json: generate it
	// on every run, or a filtered run on a fresh clone fails to build ("Tsconfig not found").
	await run('npx', ['svelte-kit', 'sync'], { cwd: ROOT, quiet: true });

	if (!filters.length) {
		console.log('\n== svelte-check ==');
		try {
			await run('npx', ['svelte-check', '--tsconfig', './tsconfig.json', '--fail-on-warnings', '--output', 'human'], { cwd: ROOT });
			results.passed += 1;
		} catch {
			results.failed += 1;
			exitCode = 1;
		}
	}

	console.log('\n== build ==');
	// Inside the checkout (so the build resolves node_modules), unique per run, removed afterwards.
	const buildRoot = path.join(ROOT, '.test-builds', path.basename(tmp));
	const buildDir = path.join(buildRoot, 'app');
	await ensureBuild({ force: true, quiet: true, buildDir, kitDir: path.join(buildRoot, 'kit') });
	const appPort = await freePort();
	const { origin } = await startApp({
		port: appPort,
		env,
		buildDir,
		logStream: fs.createWriteStream(path.join(tmp, 'logs', 'app.log'))
	});
	const chromium = chromiumPath();
	const testEnv = {
		...env,
		APP_URL: origin,
		TEST_TMP: tmp,
		CHROMIUM_PATH: chromium ?? '',
		FORCE_COLOR: '0'
	};

	for (const project of ['unit', 'integration', 'e2e']) {
		console.log(`\n== vitest: ${project} ==`);
		if (project === 'e2e' && !chromium) {
			console.error('Chromium not found at /usr/bin/chromium: install the Debian package "chromium" to run the browser tests.');
			results.failed += 1;
			exitCode = 1;
			continue;
		}
		const report = path.join(tmp, `vitest-${project}.json`);
		try {
			await run(
				'npx',
				['vitest', 'run', '--project', project, '--reporter=default', '--reporter=json', `--outputFile.json=${report}`, '--passWithNoTests', ...filters],
				{ cwd: ROOT, env: testEnv }
			);
		} catch {
			exitCode = 1;
		}
		if (!countReport(report)) {
			results.failed += 1;
			exitCode = 1;
		}
	}
	if (exitCode !== 0) {
		console.log(`\nService and app logs: ${path.join(tmp, 'logs')} (kept only with KEEP_TEST_TMP=1)`);
	}
} catch (err) {
	console.error(`\nThe test run could not set up: ${err.stack ?? err.message}`);
	results.failed += 1;
	exitCode = 1;
} finally {
	await cleanup();
}
if (results.failed > 0) exitCode = 1;
console.log(`\n${results.passed} passed, ${results.failed} failed${results.skipped ? `, ${results.skipped} skipped` : ''}`);
process.exit(exitCode);
