// `npm run cluster`: Glasscrib as an institute would run it, on this machine's loopback: a three-node
// MariaDB Galera cluster, two app instances (each on its own node), HAProxy in front of them on one
// port (http://127.0.0.1:4180, or GLASSCRIB_CLUSTER_PORT), the S3 and mail fakes. Data in .data/cluster/
// (git-ignored; delete it to start from an empty demo). Ctrl-C or SIGTERM stops everything it started.
import fs from 'node:fs';
import path from 'node:path';
import crypto from 'node:crypto';
import { ensureDependencies } from './lib/deps.mjs';

await ensureDependencies();

const { ROOT, ensureBuild } = await import('./lib/stack.mjs');
const { isListening, stopChildren } = await import('./lib/proc.mjs');
const { startClusterStack } = await import('./lib/cluster-stack.mjs');

const DATA = path.join(ROOT, '.data', 'cluster');
const lbPort = Number(process.env.GLASSCRIB_CLUSTER_PORT ?? 4180);

/** Secrets made once per checkout, kept in .data/cluster/local.env so hashes stay valid. */
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
	console.log('\nStopping (HAProxy, app instances, fakes, then the database nodes, last one first) ...');
	await stopChildren();
	process.exit(code);
}
process.on('SIGINT', () => shutdown(0));
process.on('SIGTERM', () => shutdown(0));

try {
	if (await isListening(lbPort)) {
		console.log(`Something already listens on 127.0.0.1:${lbPort}: a cluster from an earlier start is probably running.`);
		console.log('Stop it first, or choose another port with GLASSCRIB_CLUSTER_PORT.');
		process.exit(0);
	}
	console.log('Glasscrib cluster: starting on loopback');
	const secrets = { ...localSecrets(), DEMO_PASSWORD: process.env.DEMO_PASSWORD || 'tarnwell-bench-2026' };
	// Internal ports are free ones chosen at each start (nothing outside this machine connects to them);
	// the node data dirs keep the cluster's state between starts.
	await ensureBuild();
	const stack = await startClusterStack({
		dir: DATA,
		ports: { lb: lbPort },
		logDir: path.join(DATA, 'logs'),
		secrets,
		buildDir: path.join(ROOT, 'build'),
		say: (m) => console.log(m)
	});
	const ports = stack.ports;
	fs.writeFileSync(path.join(DATA, 'ports.json'), JSON.stringify(ports, null, 2) + '\n');
	const DEMO_USERS = JSON.parse(fs.readFileSync(path.join(ROOT, 'seed/demo-users.json'), 'utf8'));
	console.log(`\nGlasscrib is running at ${stack.lb.origin} (HAProxy over instances ${stack.apps.map((a) => a.origin).join(' and ')})`);
	console.log(`Database nodes: ${ports.galera.map((p, i) => `node ${i + 1} 127.0.0.1:${p.sql}`).join(', ')}`);
	console.log(`Demo sign-ins (password "${secrets.DEMO_PASSWORD}"):`);
	for (const u of DEMO_USERS) console.log(`  ${u.role.padEnd(10)} ${u.email}`);
	console.log(`\nLogs: ${path.relative(ROOT, path.join(DATA, 'logs'))}/ · ports: ${path.relative(ROOT, path.join(DATA, 'ports.json'))}`);
	console.log('Press Ctrl-C to stop.');
} catch (err) {
	console.error(`\nCould not start the cluster: ${err.message}`);
	await shutdown(1);
}
