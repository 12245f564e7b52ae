// Brings up the services Glasscrib needs (MariaDB, migrations, demo seed, S3 fake, mail fake) for
// `npm start` (fixed ports, data under .data/) and `npm test` (free ports, a temp dir).
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { isListening, run, startChild, waitFor } from './proc.mjs';
import { startMariadb } from './mariadb.mjs';
import { applyMigrations } from '../migrate.mjs';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');

/**
 * Starts or reuses every backing service and returns the environment the app needs.
 * `ports`: { db, s3, smtp }; `dataDir`: where MariaDB and S3 files live; `logDir`: service logs.
 */
export async function startStack({ dataDir, ports, logDir, secrets, seed = true, quiet = false }) {
	fs.mkdirSync(logDir, { recursive: true });
	const log = (name) => fs.createWriteStream(path.join(logDir, `${name}.log`), { flags: 'a' });
	const say = (msg) => quiet || console.log(msg);

	say(`- MariaDB on 127.0.0.1:${ports.db} (data in ${path.relative(ROOT, path.join(dataDir, 'mariadb')) || dataDir})`);
	const mariadb = await startMariadb({
		dataDir: path.join(dataDir, 'mariadb'),
		port: ports.db,
		database: 'glasscrib',
		user: 'glasscrib',
		password: secrets.DB_PASSWORD,
		logStream: log('mariadb')
	});
	if (!mariadb.started) say('  (reusing the server from an earlier start)');
	say('- applying migrations');
	await applyMigrations(mariadb.url);

	const env = {
		DATABASE_URL: mariadb.url,
		S3_ENDPOINT: `http://127.0.0.1:${ports.s3}`,
		S3_BUCKET: 'glasscrib',
		S3_REGION: 'us-east-1',
		S3_ACCESS_KEY_ID: 'S3RVER',
		S3_SECRET_ACCESS_KEY: 'S3RVER',
		SMTP_URL: `smtp://127.0.0.1:${ports.smtp}`,
		MAIL_FROM: 'Glasscrib <glasscrib@tarnwell.example>',
		AUTH_PEPPER: secrets.AUTH_PEPPER,
		DEMO_PASSWORD: secrets.DEMO_PASSWORD,
		AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: 'true'
	};

	if (seed) {
		say('- demo data (only into an empty database)');
		const out = await run(process.execPath, ['--import', 'tsx', path.join(ROOT, 'seed/run.ts')], {
			cwd: ROOT,
			env,
			quiet: true
		});
		say(`  ${out.trim().split('\n').pop()}`);
	}

	say(`- S3 fake on 127.0.0.1:${ports.s3}`);
	if (!(await isListening(ports.s3))) {
		startChild('s3', process.execPath, [path.join(ROOT, 'scripts/s3-fake.mjs'), '--port', String(ports.s3), '--dir', path.join(dataDir, 's3')], {
			logStream: log('s3')
		});
		await waitFor('S3 fake', () => isListening(ports.s3), 20_000);
	} else say('  (reusing the running one)');

	say(`- mail fake on 127.0.0.1:${ports.smtp}`);
	if (!(await isListening(ports.smtp))) {
		startChild('mail', process.execPath, [path.join(ROOT, 'scripts/mail-fake.mjs'), '--port', String(ports.smtp)], {
			env: { DATABASE_URL: mariadb.url },
			logStream: log('mail')
		});
		await waitFor('mail fake', () => isListening(ports.smtp), 20_000);
	} else say('  (reusing the running one)');

	return env;
}

/** Newest modification time below the given paths (files only). */
function newestMtime(paths) {
	let newest = 0;
	const walk = (p) => {
		if (!fs.existsSync(p)) return;
		const st = fs.statSync(p);
		if (st.isDirectory()) for (const e of fs.readdirSync(p)) walk(path.join(p, e));
		else newest = Math.max(newest, st.mtimeMs);
	};
	for (const p of paths) walk(path.join(ROOT, p));
	return newest;
}

/**
 * Builds the app with adapter-node unless the build is newer than every source file.
 * `buildDir`/`kitDir` let a test run build into a temp dir of its own.
 */
export async function ensureBuild({ force = false, quiet = false, buildDir = path.join(ROOT, 'build'), kitDir } = {}) {
	const stamp = path.join(buildDir, '.built-at');
	const sources = ['src', 'static', 'package-lock.json', 'svelte.config.js', 'vite.config.ts', 'tailwind.config.ts'];
	if (!force && fs.existsSync(stamp) && fs.statSync(stamp).mtimeMs > newestMtime(sources)) return false;
	if (!quiet) console.log('- building the app (vite build)');
	const env = { GLASSCRIB_BUILD_DIR: buildDir, ...(kitDir ? { GLASSCRIB_KIT_DIR: kitDir } : {}) };
	await run('npx', ['vite', 'build', '--logLevel', 'warn'], { cwd: ROOT, quiet, env });
	fs.writeFileSync(stamp, new Date().toISOString());
	return true;
}

/** Starts the built app (node build) and waits until /health answers. */
export async function startApp({ port, env, logStream, buildDir = path.join(ROOT, 'build') }) {
	const origin = `http://127.0.0.1:${port}`;
	const child = startChild('app', process.execPath, [path.join(buildDir, 'index.js')], {
		cwd: ROOT,
		env: {
			...env,
			HOST: '127.0.0.1',
			PORT: String(port),
			ORIGIN: origin,
			BODY_SIZE_LIMIT: '30M',
			NODE_ENV: 'production',
			SHUTDOWN_TIMEOUT: '2'
		},
		logStream
	});
	await waitFor(
		'the app',
		async () => {
			if (child.exitCode !== null) throw new Error(`the app exited with code ${child.exitCode}`);
			const res = await fetch(`${origin}/health`).catch(() => null);
			return res?.ok ?? false;
		},
		60_000,
		200
	);
	return { origin, child };
}
