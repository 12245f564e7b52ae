// Everything of an institute-style deployment on loopback: a Galera cluster, migrations and the demo
// seed, the S3 and mail fakes, two app instances (each on its own database node) and HAProxy in front.
// Used by `npm run cluster` (scripts/cluster.mjs) and `npm run test:cluster` (scripts/test-cluster.mjs).
import fs from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import { ROOT } from './stack.mjs';
import { freePort, isListening, run, startChild, waitFor } from './proc.mjs';
import { galeraPorts, startGalera } from './galera.mjs';
import { startHaproxy } from './haproxy.mjs';
import { applyMigrations } from '../migrate.mjs';

/** Which database node each app instance uses: instance A on node 1, B on node 2 (node 3 holds the mail fake's writes). */
export const APP_NODES = [0, 1];
export const APP_NAMES = ['a', 'b'];

/**
 * GET /health on an instance with the Host of the public origin, as requests through HAProxy carry it
 * (the app may redirect a request that names another loopback address than its ORIGIN).
 */
export function health(port, publicOrigin) {
	return new Promise((resolve, reject) => {
		const headers = { host: new URL(publicOrigin).host };
		const req = http.get({ host: '127.0.0.1', port, path: '/health', setHost: false, headers, timeout: 5000 }, (res) => {
			let body = '';
			res.setEncoding('utf8');
			res.on('data', (c) => (body += c));
			res.on('end', () => resolve({ status: res.statusCode, body }));
		});
		req.on('timeout', () => req.destroy(new Error('timed out')));
		req.on('error', reject);
	});
}

/** Starts one built app instance with its own port and database node; the public origin is HAProxy's. */
export async function startInstance({ name, port, env, publicOrigin, buildDir, logStream }) {
	const own = `http://127.0.0.1:${port}`;
	const child = startChild(`app-${name}`, process.execPath, [path.join(buildDir, 'index.js')], {
		cwd: ROOT,
		env: {
			...env,
			HOST: '127.0.0.1',
			PORT: String(port),
			// Links in mail and the form-post origin check use the address users reach: the balancer's.
			ORIGIN: publicOrigin,
			// The client's address comes from HAProxy's X-Forwarded-For (one proxy), so sign-in throttling
			// per address still tells clients apart.
			ADDRESS_HEADER: 'x-forwarded-for',
			XFF_DEPTH: '1',
			BODY_SIZE_LIMIT: '30M',
			NODE_ENV: 'production',
			SHUTDOWN_TIMEOUT: '2'
		},
		logStream
	});
	let last = 'no answer';
	await waitFor(
		`app instance ${name}`,
		async () => {
			if (child.exitCode !== null) throw new Error(`app instance ${name} exited with code ${child.exitCode}`);
			const res = await health(port, publicOrigin).catch((err) => ((last = String(err.message ?? err)), null));
			if (res && res.status !== 200) last = `${res.status} ${res.body}`;
			return res?.status === 200;
		},
		90_000,
		250
	).catch((err) => {
		throw new Error(`${err.message} (last /health answer: ${last})`);
	});
	return { name, origin: own, child };
}

/** Starts a service child and waits until it listens; fails at once when it exits. */
async function startService(name, args, { port, env, logStream }) {
	const child = startChild(name, process.execPath, args, { env, logStream });
	await waitFor(
		name,
		async () => {
			if (child.exitCode !== null) throw new Error(`${name} exited with code ${child.exitCode} (see its log)`);
			return isListening(port);
		},
		30_000
	);
	return child;
}

/**
 * Starts the whole deployment. `ports`: { lb, s3, smtp, apps: [a, b], galera: [{ sql, gcomm, ist, sst } ×3], stats }:
 * any left out is a free port chosen just before its service starts (a port chosen minutes earlier may
 * have been taken meanwhile on a busy machine). `dir`: data (galera/, s3/, haproxy/).
 * Returns handles, the ports used and the environment the app instances got.
 */
export async function startClusterStack({ dir, ports: given, logDir, secrets, buildDir, seed = true, say = () => {} }) {
	fs.mkdirSync(logDir, { recursive: true });
	const log = (name) => fs.createWriteStream(path.join(logDir, `${name}.log`), { flags: 'a' });
	const ports = { ...given, apps: [...(given.apps ?? [])] };
	ports.galera = await galeraPorts(3, given.galera ?? []);

	say(`- Galera cluster of ${ports.galera.length} MariaDB nodes (data in ${path.join(dir, 'galera')})`);
	const galera = await startGalera({ dir: path.join(dir, 'galera'), ports: ports.galera, logStream: log, say });
	const urls = await galera.createAppUser({ database: 'glasscrib', user: 'glasscrib', password: secrets.DB_PASSWORD });

	say('- applying migrations (through node 1; schema changes replicate to every node)');
	await applyMigrations(urls[0]);

	ports.s3 ??= await freePort();
	ports.smtp ??= await freePort();
	const base = {
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
			env: { ...base, DATABASE_URL: urls[0] },
			quiet: true
		});
		say(`  ${out.trim().split('\n').pop()}`);
	}

	say(`- S3 fake on 127.0.0.1:${ports.s3}`);
	await startService('S3 fake', [path.join(ROOT, 'scripts/s3-fake.mjs'), '--port', String(ports.s3), '--dir', path.join(dir, 's3')], {
		port: ports.s3,
		logStream: log('s3')
	});

	say(`- mail fake on 127.0.0.1:${ports.smtp} (stores mail through node 3)`);
	await startService('mail fake', [path.join(ROOT, 'scripts/mail-fake.mjs'), '--port', String(ports.smtp)], {
		port: ports.smtp,
		env: { DATABASE_URL: urls[2] },
		logStream: log('mail')
	});

	ports.lb ??= await freePort();
	const publicOrigin = `http://127.0.0.1:${ports.lb}`;
	const apps = [];
	for (let k = 0; k < APP_NODES.length; k++) {
		const node = APP_NODES[k];
		ports.apps[k] ??= await freePort();
		say(`- app instance ${APP_NAMES[k].toUpperCase()} on 127.0.0.1:${ports.apps[k]} (database node ${node + 1})`);
		apps.push({
			node,
			...(await startInstance({
				name: APP_NAMES[k],
				port: ports.apps[k],
				env: { ...base, DATABASE_URL: urls[node] },
				publicOrigin,
				buildDir,
				logStream: log(`app-${APP_NAMES[k]}`)
			}))
		});
	}

	ports.stats ??= await freePort();
	say(`- HAProxy on ${publicOrigin}${ports.stats ? ` (its status page on http://127.0.0.1:${ports.stats})` : ''}`);
	const lb = await startHaproxy({
		dir: path.join(dir, 'haproxy'),
		port: ports.lb,
		statsPort: ports.stats,
		servers: apps.map((a, k) => ({ name: `app-${APP_NAMES[k]}`, port: ports.apps[k] })),
		logStream: log('haproxy')
	});
	return { galera, urls, apps, lb, env: base, ports };
}
