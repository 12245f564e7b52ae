// `npm start`: sets everything up on this machine and serves Glasscrib on http://127.0.0.1:4173.
// Services and their data live under .data/ (git-ignored; GLASSCRIB_DATA_DIR chooses another dir).
// One start per data dir (a second one says where the first serves and leaves it alone); the start
// watches its services (a service that stops is started again, at most 3 times in 5 minutes, else
// everything stops); Ctrl-C, SIGTERM (also to the npm process) or the end of the terminal stop
// every service it started.
// `npm start -- --services-only`: MariaDB, S3 fake and mail fake without the app (for `npm run dev`).
import fs from 'node:fs';
import path from 'node:path';
import crypto from 'node:crypto';
import { ensureDependencies } from './lib/deps.mjs';

await ensureDependencies();

const { ROOT, startStack, ensureBuild, startApp } = await import('./lib/stack.mjs');
const { assertPortFree, stopChild, stopChildren, watchParent, PORT_VARIABLES } = await import('./lib/proc.mjs');
const { acquireLock, stopLeftovers } = await import('./lib/instance-lock.mjs');

const servicesOnly = process.argv.includes('--services-only');
const DATA = path.resolve(process.env.GLASSCRIB_DATA_DIR || path.join(ROOT, '.data'));
const LOGS = path.join(DATA, 'logs');

/** A port from its variable, or exit with a message naming the variable. */
function portFrom(variable, fallback) {
	const raw = process.env[variable];
	if (raw === undefined || raw === '') return fallback;
	const n = Number(raw);
	if (!/^\d+$/.test(raw) || n < 1 || n > 65535) {
		console.error(`${variable}=${raw} is not a port number (1-65535).`);
		process.exit(1);
	}
	return n;
}
const ports = {
	db: portFrom('GLASSCRIB_DB_PORT', 3307),
	s3: portFrom('GLASSCRIB_S3_PORT', 4569),
	smtp: portFrom('GLASSCRIB_SMTP_PORT', 2525),
	app: portFrom('PORT', 4173)
};
const dupes = Object.entries(ports).filter(([, p], i, all) => all.findIndex(([, q]) => q === p) !== i);
if (dupes.length) {
	console.error(`Two services would share port ${dupes[0][1]}: give each of GLASSCRIB_DB_PORT, GLASSCRIB_S3_PORT, GLASSCRIB_SMTP_PORT and PORT its own port.`);
	process.exit(1);
}

/** Local secrets, made once per data dir and kept in local.env so hashes stay valid. */
function localSecrets() {
	const file = path.join(DATA, 'local.env');
	const values = {};
	if (fs.existsSync(file)) {
		for (const line of fs.readFileSync(file, 'utf8').split('\n')) {
			const m = /^([A-Z_]+)=(.*)$/.exec(line);
			if (m) values[m[1]] = m[2];
		}
	}
	values.AUTH_PEPPER ??= crypto.randomBytes(32).toString('base64url');
	values.DB_PASSWORD ??= crypto.randomBytes(18).toString('base64url');
	fs.writeFileSync(file, Object.entries(values).map(([k, v]) => `${k}=${v}`).join('\n') + '\n', { mode: 0o600 });
	return values;
}

// One start per data dir. A live owner is left alone: its database is never touched.
const claim = acquireLock(DATA, { ports, origin: servicesOnly ? null : `http://127.0.0.1:${ports.app}` });
if (!claim.ok) {
	const owner = claim.owner ?? {};
	const where = owner.origin ? ` and serves ${owner.origin}` : '';
	console.log(`Glasscrib is already running from this data dir (${DATA}): npm start, pid ${owner.pid}${where}.`);
	console.log(`Nothing was started or stopped. To start again, stop that one first (Ctrl-C in its terminal, or kill ${owner.pid}).`);
	process.exit(0);
}
const lock = claim.lock;

let stopping = false;
async function shutdown(code = 0, why = 'Stopping the services this run started ...') {
	if (stopping) return;
	stopping = true;
	console.log(`\n${why}`);
	await stopChildren();
	lock.release();
	process.exit(code);
}
process.on('SIGINT', () => shutdown(0));
process.on('SIGTERM', () => shutdown(0));
process.on('SIGHUP', () => shutdown(0));
// A SIGTERM to npm kills the `sh -c` between npm and us but never reaches us: watch for it.
watchParent(() => shutdown(0, 'The process that started us is gone: stopping the services this run started ...'));

/** Keeps watching the services: a stop or three failed checks in a row start it again, or stop all. */
function supervise(services) {
	const RESTARTS = 3;
	const WINDOW_MS = 5 * 60_000;
	const history = new Map();
	const restart = async (svc, what) => {
		if (stopping || svc.restarting) return;
		svc.restarting = true;
		const log = svc.logFile ? ` (log: ${svc.logFile})` : '';
		console.error(`\n[supervisor] The ${svc.label} on 127.0.0.1:${svc.port} ${what}${log}.`);
		const recent = (history.get(svc.name) ?? []).filter((t) => Date.now() - t < WINDOW_MS);
		if (recent.length >= RESTARTS) {
			await shutdown(1, `[supervisor] It stopped ${RESTARTS} times in 5 minutes: stopping everything rather than serving without it.`);
			return;
		}
		history.set(svc.name, [...recent, Date.now()]);
		try {
			await stopChild(svc.child, 5_000);
			// A short pause, so that a service that dies at once does not spin.
			await new Promise((r) => setTimeout(r, 1000));
			if (stopping) return;
			console.error(`[supervisor] Starting the ${svc.label} again ...`);
			const child = await svc.start();
			lock.record(svc.name, child.pid, svc.signature);
			watchExit(svc);
			console.error(`[supervisor] The ${svc.label} is back on 127.0.0.1:${svc.port}.`);
		} catch (err) {
			await shutdown(1, `[supervisor] Could not start the ${svc.label} again: ${err.message}\nStopping everything rather than serving without it.`);
		} finally {
			svc.restarting = false;
		}
	};
	const watchExit = (svc) => {
		const child = svc.child;
		child?.exited.then(({ code, signal }) => {
			if (!stopping && svc.child === child) void restart(svc, `stopped (${signal ? `signal ${signal}` : `exit code ${code}`})`);
		});
	};
	for (const svc of services) {
		svc.misses = 0;
		watchExit(svc);
	}
	const timer = setInterval(async () => {
		for (const svc of services) {
			if (stopping || svc.restarting) continue;
			if (await svc.check().catch(() => false)) svc.misses = 0;
			else if (++svc.misses >= (svc.maxMisses ?? 3)) {
				svc.misses = 0;
				void restart(svc, 'does not answer as ours any more');
			}
		}
	}, Number(process.env.GLASSCRIB_SUPERVISE_MS || 2000));
	timer.unref();
}

try {
	fs.mkdirSync(LOGS, { recursive: true });
	if (claim.stale) console.log('An earlier start of this data dir did not stop cleanly.');
	await stopLeftovers(DATA, claim.stale);
	// Every port must be free before anything starts: say which one is taken and how to choose another.
	const labels = { db: 'MariaDB', s3: 'S3 fake', smtp: 'mail fake', app: 'app' };
	for (const key of servicesOnly ? ['db', 's3', 'smtp'] : ['db', 's3', 'smtp', 'app']) await assertPortFree(labels[key], ports[key]);

	console.log('Glasscrib: starting the local services');
	const secrets = { ...localSecrets(), DEMO_PASSWORD: process.env.DEMO_PASSWORD || 'tarnwell-bench-2026' };
	const services = {};
	const env = await startStack({ dataDir: DATA, ports, logDir: LOGS, secrets, services });
	services.mariadb.signature = `--datadir=${path.join(DATA, 'mariadb')}`;
	services.s3.signature = `${path.join(ROOT, 'scripts/s3-fake.mjs')} --port ${ports.s3} --dir ${path.join(DATA, 's3')}`;
	services.mail.signature = `${path.join(ROOT, 'scripts/mail-fake.mjs')} --port ${ports.smtp}`;
	for (const svc of [services.mariadb, services.s3, services.mail]) if (svc.child) lock.record(svc.name, svc.child.pid, svc.signature);

	if (servicesOnly) {
		supervise([services.mariadb, services.s3, services.mail]);
		console.log('\nServices are running (no app: --services-only). Their settings for `npm run dev`:');
		for (const [k, v] of Object.entries(env)) if (k !== 'AUTH_PEPPER' && k !== 'DEMO_PASSWORD') console.log(`  ${k}=${v}`);
		console.log(`  (AUTH_PEPPER is in ${path.join(DATA, 'local.env')}) · logs: ${LOGS}`);
		console.log('Press Ctrl-C to stop.');
	} else {
		await ensureBuild();
		const app = await startApp({ port: ports.app, env, logFile: path.join(LOGS, 'app.log') });
		app.service.signature = path.join(ROOT, 'build', 'index.js');
		// A busy app (a large import) may answer /health late: give it longer than the fakes before a restart.
		app.service.maxMisses = 10;
		lock.record('app', app.child.pid, app.service.signature);
		supervise([services.mariadb, services.s3, services.mail, app.service]);
		const origin = app.origin;
		const DEMO_USERS = JSON.parse(fs.readFileSync(path.join(ROOT, 'seed/demo-users.json'), 'utf8'));
		console.log(`\nGlasscrib is running at ${origin} (http://localhost:${ports.app} leads there too)\n`);
		console.log(`Demo sign-ins (password "${secrets.DEMO_PASSWORD}", set DEMO_PASSWORD before the first start to change it):`);
		for (const u of DEMO_USERS) console.log(`  ${u.role.padEnd(10)} ${u.email}`);
		console.log(`\nOutbox (captured mail): ${origin}/admin/outbox · service logs: ${LOGS}`);
		console.log('Press Ctrl-C to stop.');
	}
} catch (err) {
	console.error(`\nCould not start Glasscrib: ${err.message}`);
	if (err.code === 'PORT_TAKEN') console.error(`Ports: ${Object.entries(PORT_VARIABLES).map(([, v]) => v).join(', ')} choose them (defaults 3307, 4569, 2525, 4173).`);
	await shutdown(1, 'Stopping what this run started ...');
}
