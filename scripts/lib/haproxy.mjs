// HAProxy (Debian's `haproxy`) in front of several app instances on one loopback port, for
// `npm run cluster` and `npm run test:cluster`. Runs in the foreground (-db) as our child.
import fs from 'node:fs';
import path from 'node:path';
import { execFileSync } from 'node:child_process';
import { isListening, run, startChild, waitFor } from './proc.mjs';

function which(cmd) {
	try {
		return execFileSync('sh', ['-c', `command -v ${cmd}`], { encoding: 'utf8' }).trim() || null;
	} catch {
		return null;
	}
}

/** Finds haproxy, installing the Debian package when we are root; else explains what to install. */
export async function ensureHaproxyInstalled() {
	const find = () => which('haproxy') ?? (fs.existsSync('/usr/sbin/haproxy') ? '/usr/sbin/haproxy' : null);
	let bin = find();
	if (!bin && process.getuid?.() === 0) {
		console.log('HAProxy is not installed: installing the Debian package haproxy ...');
		const env = { DEBIAN_FRONTEND: 'noninteractive' };
		await run('apt-get', ['update', '-qq'], { env });
		await run('apt-get', ['install', '-y', '-qq', '--no-install-recommends', 'haproxy'], { env });
		bin = find();
	}
	if (!bin) throw new Error('HAProxy not found. Install the Debian package "haproxy" (sudo apt-get install haproxy), then run this again.');
	return bin;
}

/**
 * The configuration: round robin over `servers` ([{ name, port }]), each checked with GET /health
 * every second (down after 2 failures, up after 2 successes; /health answers 503 when the instance's
 * database node is gone). A request that could not reach an instance is sent to another one
 * (`redispatch`); a request an instance has started answering is never replayed.
 */
export function haproxyConfig({ port, servers, statsPort }) {
	return [
		'global',
		'  maxconn 1000',
		'',
		'defaults',
		'  mode http',
		'  option forwardfor',
		'  option redispatch',
		'  retries 3',
		'  retry-on conn-failure empty-response',
		'  timeout connect 2s',
		'  timeout client 120s',
		// Long enough for an import's commit or a large solve; the app has its own limits.
		'  timeout server 300s',
		'  timeout http-request 30s',
		// A check that waits (the node pauses while the cluster drops a dead member) is not a failed one.
		'  timeout check 4s',
		'',
		'frontend glasscrib',
		`  bind 127.0.0.1:${port}`,
		'  default_backend apps',
		'',
		'backend apps',
		'  balance roundrobin',
		'  option httpchk GET /health',
		'  http-check expect status 200',
		'  default-server inter 1s fastinter 500ms downinter 1s fall 2 rise 2',
		...servers.map((s) => `  server ${s.name} 127.0.0.1:${s.port} check`),
		...(statsPort
			? ['', 'frontend stats', `  bind 127.0.0.1:${statsPort}`, '  stats enable', '  stats uri /', '  stats refresh 5s', '  stats show-legends']
			: []),
		''
	].join('\n');
}

/** Writes the configuration to `dir`, checks it (haproxy -c) and starts HAProxy; resolves when it listens. */
export async function startHaproxy({ dir, port, servers, statsPort, logStream }) {
	const bin = await ensureHaproxyInstalled();
	fs.mkdirSync(dir, { recursive: true });
	const cfg = path.join(dir, 'haproxy.cfg');
	fs.writeFileSync(cfg, haproxyConfig({ port, servers, statsPort }));
	await run(bin, ['-c', '-q', '-f', cfg], { quiet: true });
	const child = startChild('haproxy', bin, ['-db', '-f', cfg], { logStream });
	await waitFor(
		'HAProxy',
		async () => {
			if (child.exitCode !== null) throw new Error(`haproxy exited with code ${child.exitCode}`);
			return isListening(port);
		},
		20_000
	);
	return { origin: `http://127.0.0.1:${port}`, child, config: cfg };
}
