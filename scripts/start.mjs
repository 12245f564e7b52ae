// `npm start`: sets everything up on this machine and serves Glasscrib on http://127.0.0.1:4173.
// Services and their data live under .data/ (git-ignored). Running it twice is safe; Ctrl-C stops
// what this run started.
import fs from 'node:fs';
import path from 'node:path';
import crypto from 'node:crypto';
import { ensureDependencies } from './lib/deps.mjs';

await ensureDependencies();

const { ROOT, startStack, ensureBuild, startApp } = await import('./lib/stack.mjs');
const { isListening, stopChildren } = await import('./lib/proc.mjs');

const DATA = path.join(ROOT, '.data');
const ports = {
	db: Number(process.env.GLASSCRIB_DB_PORT ?? 3307),
	s3: Number(process.env.GLASSCRIB_S3_PORT ?? 4569),
	smtp: Number(process.env.GLASSCRIB_SMTP_PORT ?? 2525),
	app: Number(process.env.PORT ?? 4173)
};

/** Local secrets, made once per checkout and kept in .data/local.env so hashes stay valid. */
function localSecrets() {
	fs.mkdirSync(DATA, { recursive: true });
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

let stopping = false;
async function shutdown(code = 0) {
	if (stopping) return;
	stopping = true;
	console.log('\nStopping the services this run started ...');
	await stopChildren();
	process.exit(code);
}
process.on('SIGINT', () => shutdown(0));
process.on('SIGTERM', () => shutdown(0));

try {
	if (await isListening(ports.app)) {
		console.log(`Something already listens on 127.0.0.1:${ports.app}: Glasscrib from an earlier start is probably running.`);
		console.log(`Open http://127.0.0.1:${ports.app} or stop it first.`);
		process.exit(0);
	}
	console.log('Glasscrib: starting the local services');
	const secrets = { ...localSecrets(), DEMO_PASSWORD: process.env.DEMO_PASSWORD || 'tarnwell-bench-2026' };
	const env = await startStack({ dataDir: DATA, ports, logDir: path.join(DATA, 'logs'), secrets });
	await ensureBuild();
	const { origin } = await startApp({ port: ports.app, env });
	const DEMO_USERS = JSON.parse(fs.readFileSync(path.join(ROOT, 'seed/demo-users.json'), 'utf8'));
	console.log(`\nGlasscrib is running at ${origin}\n`);
	console.log(`Demo sign-ins (password "${secrets.DEMO_PASSWORD}", set DEMO_PASSWORD before the first start to change it):`);
	for (const u of DEMO_USERS) console.log(`  ${u.role.padEnd(10)} ${u.email}`);
	console.log(`\nOutbox (captured mail): ${origin}/admin/outbox · service logs: .data/logs/`);
	console.log('Press Ctrl-C to stop.');
} catch (err) {
	console.error(`\nCould not start Glasscrib: ${err.message}`);
	await shutdown(1);
}
