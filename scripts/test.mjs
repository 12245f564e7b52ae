// `npm test`: a throwaway MariaDB, S3 fake and mail fake on free ports in a temp dir, the built app,
// then svelte-check and vitest (unit, integration, e2e in Chromium). Ends with "N passed, N failed".
// `npm test -- tests/unit/optics` runs only matching test files (services still start).
// Like `npm start`, it first finds the Debian packages it needs (MariaDB; Chromium when browser tests
// will run) and installs the missing ones with apt-get when run as root, else says what to install.
// `npm test -- --check-system` prints that plan (and the apt-get commands) without running anything.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import { ensureDependencies } from './lib/deps.mjs';

const { ensureSystemPackages } = await import('./lib/system-packages.mjs');

const args = process.argv.slice(2);
const checkSystemOnly = args.includes('--check-system');
const filters = args.filter((a) => a !== '--check-system');
// Chromium for the browser tests (tests/e2e, and a few integration tests that drive a page).
const needs = ['mariadb', 'chromium'];

if (checkSystemOnly) {
	try {
		const { found, plan } = ensureSystemPackages(needs, { dryRun: true });
		for (const need of needs) console.log(`${need}: ${found[need] ?? 'missing'}`);
		if (plan.action === 'none') console.log('Nothing to install.');
		process.exit(plan.action === 'instruct' ? 1 : 0);
	} catch (err) {
		console.error(err.message);
		process.exit(1);
	}
}

await ensureDependencies();
const { ROOT, startStack, ensureBuild, startApp } = await import('./lib/stack.mjs');
const { freePort, run, stopChildren, watchParent } = await import('./lib/proc.mjs');

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
let interrupted = false;
const stopOn = (code) => async () => {
	if (interrupted) return;
	interrupted = true;
	await cleanup();
	process.exit(code);
};
process.on('SIGINT', stopOn(130));
process.on('SIGTERM', stopOn(143));
// A SIGTERM to npm kills the `sh -c` between npm and us but never reaches us: watch for it.
watchParent(stopOn(143));

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

/** Installs (as root) or explains the missing Debian packages; Chromium's absence fails only the browser tests. */
function systemPackages() {
	try {
		return ensureSystemPackages(needs).found;
	} catch (err) {
		// Without Chromium the other tests still run; the browser tests count as failed, with the reason.
		const found = ensureSystemPackages(['mariadb']).found;
		console.error(err.message);
		return { ...found, chromium: null, chromiumProblem: err.message };
	}
}

try {
	const system = systemPackages();
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
	const chromium = system.chromium ?? null;
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
			console.error(system.chromiumProblem ?? 'Chromium not found: install the Debian package "chromium" to run the browser tests.');
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
