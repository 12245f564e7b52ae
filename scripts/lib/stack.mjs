// Brings up the services Glasscrib needs (MariaDB, migrations, demo seed, S3 fake, mail fake) for
// `npm start` (fixed ports, data under .data/) and `npm test` (free ports, a temp dir).
// Every service is started by us and checked to be ours (the process we started answers on its port
// with the id we gave it): a port held by another program is refused, never "reused".
import fs from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import crypto from 'node:crypto';
import { fileURLToPath } from 'node:url';
import { assertPortFree, isRunning, run, startChild, waitFor } from './proc.mjs';
import { describeServer, startMariadb } from './mariadb.mjs';
import { applyMigrations } from '../migrate.mjs';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');

/** The last lines of a log file, for a message about a service that stopped. */
export function logTail(file, lines = 5) {
	try {
		return fs.readFileSync(file, 'utf8').trimEnd().split('\n').slice(-lines).join('\n');
	} catch {
		return '';
	}
}

/** What the S3 fake answers on its identity path, or null. */
async function s3Identity(port) {
	const res = await fetch(`http://127.0.0.1:${port}/.glasscrib-service`, { signal: AbortSignal.timeout(2000) }).catch(() => null);
	return res?.ok ? (await res.text()).trim() : null;
}

/** The SMTP greeting on the port, or null. */
function smtpGreeting(port) {
	return new Promise((resolve) => {
		const socket = net.connect({ port, host: '127.0.0.1' });
		let data = '';
		const done = (value) => {
			socket.destroy();
			resolve(value);
		};
		socket.setTimeout(2000, () => done(null));
		socket.on('error', () => done(null));
		socket.on('data', (chunk) => {
			data += chunk;
			if (data.includes('\n')) {
				socket.write('QUIT\r\n');
				done(data.trim());
			}
		});
	});
}

/**
 * A service we start and can start again: `start()` spawns it and waits until it answers as ours,
 * `check()` tells whether it still does. `child` is the current process.
 */
function service({ name, label, port, logFile, spawnIt, answersAsOurs }) {
	const svc = {
		name,
		label,
		port,
		logFile,
		child: null,
		async start() {
			await assertPortFree(label, port);
			const id = crypto.randomBytes(8).toString('hex');
			const child = spawnIt(id);
			svc.child = child;
			svc.id = id;
			await waitFor(
				label,
				async () => {
					if (!isRunning(child)) {
						const tail = logTail(logFile);
						throw new Error(`it exited (${child.exitCode ?? child.signalCode})${tail ? `:\n${tail}` : ''}`);
					}
					return answersAsOurs(id);
				},
				20_000
			);
			return child;
		},
		async check() {
			return isRunning(svc.child) && (await answersAsOurs(svc.id).catch(() => false));
		}
	};
	return svc;
}

/**
 * Starts every backing service and returns the environment the app needs.
 * `ports`: { db, s3, smtp }; `dataDir`: where MariaDB and S3 files live; `logDir`: service logs.
 * `services`, when given, is filled with { mariadb, s3, mail } (see `service`) for supervision.
 */
export async function startStack({ dataDir, ports, logDir, secrets, seed = true, quiet = false, services = {} }) {
	fs.mkdirSync(logDir, { recursive: true });
	const logFile = (name) => path.join(logDir, `${name}.log`);
	const log = (name) => fs.createWriteStream(logFile(name), { flags: 'a' });
	const say = (msg) => quiet || console.log(msg);
	const dbDir = path.join(dataDir, 'mariadb');

	const shown = path.relative(ROOT, dbDir);
	say(`- MariaDB on 127.0.0.1:${ports.db} (data in ${shown && !shown.startsWith('..') ? shown : dbDir})`);
	const dbOptions = {
		dataDir: dbDir,
		port: ports.db,
		database: 'glasscrib',
		user: 'glasscrib',
		password: secrets.DB_PASSWORD,
		logStream: log('mariadb')
	};
	const mariadb = await startMariadb(dbOptions);
	if (!mariadb.started) say('  (reusing the server of this data dir)');
	services.mariadb = {
		name: 'mariadb',
		label: 'MariaDB',
		port: ports.db,
		logFile: logFile('mariadb'),
		child: mariadb.child,
		async start() {
			const again = await startMariadb({ ...dbOptions, logStream: log('mariadb'), reuse: false });
			this.child = again.child;
			return again.child;
		},
		async check() {
			const info = await describeServer(mariadb.socket).catch(() => null);
			return !!info && Number(info.port) === ports.db && (!this.child || isRunning(this.child));
		}
	};
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

	services.s3 = service({
		name: 's3',
		label: 'S3 fake',
		port: ports.s3,
		logFile: logFile('s3'),
		spawnIt: (id) =>
			startChild('s3', process.execPath, [path.join(ROOT, 'scripts/s3-fake.mjs'), '--port', String(ports.s3), '--dir', path.join(dataDir, 's3')], {
				env: { GLASSCRIB_SERVICE_ID: id },
				logStream: log('s3')
			}),
		answersAsOurs: async (id) => (await s3Identity(ports.s3)) === `glasscrib-s3-fake ${id}`
	});
	say(`- S3 fake on 127.0.0.1:${ports.s3}`);
	await services.s3.start();

	services.mail = service({
		name: 'mail',
		label: 'mail fake',
		port: ports.smtp,
		logFile: logFile('mail'),
		spawnIt: (id) =>
			startChild('mail', process.execPath, [path.join(ROOT, 'scripts/mail-fake.mjs'), '--port', String(ports.smtp)], {
				env: { DATABASE_URL: mariadb.url, GLASSCRIB_SERVICE_ID: id },
				logStream: log('mail')
			}),
		answersAsOurs: async (id) => {
			const greeting = await smtpGreeting(ports.smtp);
			return !!greeting && greeting.startsWith('220 ') && greeting.endsWith(`Glasscrib mail fake ${id}`);
		}
	});
	say(`- mail fake on 127.0.0.1:${ports.smtp}`);
	await services.mail.start();

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

/**
 * Starts the built app (node build) and waits until /health answers from it. Returns { origin, child,
 * service } where `service` can start it again and check it (for supervision).
 */
export async function startApp({ port, env, logStream, logFile, buildDir = path.join(ROOT, 'build') }) {
	const origin = `http://127.0.0.1:${port}`;
	const svc = {
		name: 'app',
		label: 'app',
		port,
		logFile,
		child: null,
		async start() {
			await assertPortFree('app', port);
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
				logStream: logStream ?? (logFile ? fs.createWriteStream(logFile, { flags: 'a' }) : undefined)
			});
			svc.child = child;
			await waitFor(
				'the app',
				async () => {
					if (!isRunning(child)) throw new Error(`the app exited with code ${child.exitCode ?? child.signalCode}`);
					return svc.check();
				},
				60_000,
				200
			);
			return child;
		},
		async check() {
			if (!isRunning(svc.child)) return false;
			const res = await fetch(`${origin}/health`, { signal: AbortSignal.timeout(5000) }).catch(() => null);
			return res?.ok ?? false;
		}
	};
	await svc.start();
	return { origin, child: svc.child, service: svc };
}
