// `npm start` as an operator meets it: occupied ports, a second start, a service that dies or loses
// its port, SIGTERM to npm, and a data dir made by an older start. Each start runs with its own
// temp data dir and free loopback ports (GLASSCRIB_DATA_DIR, GLASSCRIB_*_PORT, PORT) and
// --services-only (the app's own supervision is the same code). (Issue 13, items 8 and 9.)
import { afterAll, describe, expect, it } from 'vitest';
import { spawn, execFileSync, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import mysql from 'mysql2/promise';

const ROOT = path.resolve('.');
const proc = (await import(path.join(ROOT, 'scripts/lib/proc.mjs'))) as {
	freePort: () => Promise<number>;
	isAlive: (pid: number) => boolean;
	isListening: (port: number) => Promise<boolean>;
};
const mariadbLib = (await import(path.join(ROOT, 'scripts/lib/mariadb.mjs'))) as {
	startMariadb: (o: { dataDir: string; port: number; database: string; user: string; password: string; reuse?: boolean }) => Promise<{ socket: string; child: ChildProcess | null }>;
};

const dirs: string[] = [];
const started: ChildProcess[] = [];
const pidsToStop: number[] = [];
afterAll(async () => {
	for (const c of started) if (c.exitCode === null && c.signalCode === null) c.kill('SIGTERM');
	for (const pid of pidsToStop) if (proc.isAlive(pid)) process.kill(pid, 'SIGTERM');
	await new Promise((r) => setTimeout(r, 3000));
	for (const d of dirs) fs.rmSync(d, { recursive: true, force: true });
});

async function freePorts() {
	return { GLASSCRIB_DB_PORT: await proc.freePort(), GLASSCRIB_S3_PORT: await proc.freePort(), GLASSCRIB_SMTP_PORT: await proc.freePort(), PORT: await proc.freePort() };
}

function tempDataDir() {
	const d = fs.mkdtempSync(path.join(os.tmpdir(), 'glasscrib-start-test-'));
	dirs.push(d);
	return d;
}

/** Runs a start (node, or npm when `viaNpm`) and collects its output. */
function runStart(dataDir: string, ports: Record<string, number>, { viaNpm = false } = {}) {
	const env = { ...process.env, GLASSCRIB_DATA_DIR: dataDir, GLASSCRIB_SUPERVISE_MS: '500' } as Record<string, string>;
	for (const [k, v] of Object.entries(ports)) env[k] = String(v);
	const child = viaNpm
		? spawn('npm', ['start', '--silent', '--', '--services-only'], { cwd: ROOT, env, stdio: ['ignore', 'pipe', 'pipe'] })
		: spawn(process.execPath, ['scripts/start.mjs', '--services-only'], { cwd: ROOT, env, stdio: ['ignore', 'pipe', 'pipe'] });
	started.push(child);
	const run = {
		child,
		output: '',
		exited: new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code))),
		async waitFor(text: string | RegExp, timeoutMs = 180_000) {
			const until = Date.now() + timeoutMs;
			while (Date.now() < until) {
				if (typeof text === 'string' ? run.output.includes(text) : text.test(run.output)) return;
				if (child.exitCode !== null && !run.output.match(text)) throw new Error(`start exited (${child.exitCode}) before "${text}":\n${run.output}`);
				await new Promise((r) => setTimeout(r, 100));
			}
			throw new Error(`no "${text}" within ${timeoutMs} ms:\n${run.output}`);
		}
	};
	child.stdout!.on('data', (c) => (run.output += c));
	child.stderr!.on('data', (c) => (run.output += c));
	return run;
}

const lockOf = (dataDir: string) => JSON.parse(fs.readFileSync(path.join(dataDir, 'start.lock'), 'utf8')) as { pid: number; services: Record<string, { pid: number }> };

async function rootOverTcp(port: number) {
	try {
		const c = await mysql.createConnection({ host: '127.0.0.1', port, user: 'root', password: '', connectTimeout: 5000 });
		await c.end();
		return 'connected';
	} catch (err) {
		return (err as { code?: string }).code ?? String(err);
	}
}

/** A foreign program on a port (a plain TCP server). */
function occupy(port: number): Promise<net.Server> {
	return new Promise((resolve, reject) => {
		const srv = net.createServer((s) => {
			s.on('error', () => undefined);
			s.end('not glasscrib\r\n');
		});
		srv.once('error', reject);
		srv.listen(port, '127.0.0.1', () => resolve(srv));
	});
}

describe('npm start (scripts/start.mjs)', () => {
	// One data dir for the starts below (each ends with its lock released): only the first one pays for
	// mariadb-install-db and the demo seed.
	let shared = '';
	const sharedDataDir = () => (shared ||= tempDataDir());
	it('refuses a port another program holds, naming the port and its variable, before starting anything', async () => {
		const dataDir = tempDataDir();
		const ports = await freePorts();
		const srv = await occupy(ports.GLASSCRIB_S3_PORT);
		try {
			const run = runStart(dataDir, ports);
			expect(await run.exited).toBe(1);
			expect(run.output).toContain(`Port ${ports.GLASSCRIB_S3_PORT} (S3 fake) is in use by another program`);
			expect(run.output).toContain(`GLASSCRIB_S3_PORT=${ports.GLASSCRIB_S3_PORT + 1} npm start`);
			expect(await proc.isListening(ports.GLASSCRIB_DB_PORT)).toBe(false);
			expect(fs.existsSync(path.join(dataDir, 'mariadb'))).toBe(false);
		} finally {
			srv.close();
		}
	}, 60_000);

	it('runs once per data dir, restarts a killed service, and stops everything on SIGTERM to npm', async () => {
		const dataDir = sharedDataDir();
		const ports = await freePorts();
		const first = runStart(dataDir, ports, { viaNpm: true });
		await first.waitFor('Services are running');
		const lock = lockOf(dataDir);
		const pids = Object.values(lock.services).map((s) => s.pid);
		pidsToStop.push(...pids);
		expect(pids).toHaveLength(3);

		// root over TCP is refused on a fresh npm start data dir
		expect(await rootOverTcp(ports.GLASSCRIB_DB_PORT)).toMatch(/^ER_ACCESS_DENIED/);

		// A second start (other ports even) leaves the first alone and says where it runs.
		const second = runStart(dataDir, await freePorts());
		expect(await second.exited).toBe(0);
		expect(second.output).toContain('already running from this data dir');
		expect(second.output).toContain(`pid ${lock.pid}`);
		for (const pid of pids) expect(proc.isAlive(pid)).toBe(true);
		const db = await mysql.createConnection({ socketPath: path.join(dataDir, 'mariadb', 'mariadb.sock'), user: os.userInfo().username });
		await db.query('SELECT 1');
		await db.end();

		// A killed S3 fake is noticed and started again, as ours.
		process.kill(lock.services.s3.pid, 'SIGKILL');
		await first.waitFor(/The S3 fake on 127\.0\.0\.1:\d+ stopped \(signal SIGKILL\)/, 20_000);
		await first.waitFor('The S3 fake is back', 30_000);
		const identity = await (await fetch(`http://127.0.0.1:${ports.GLASSCRIB_S3_PORT}/.glasscrib-service`)).text();
		expect(identity).toMatch(/^glasscrib-s3-fake [0-9a-f]{16}$/);
		const now = lockOf(dataDir).services;
		pidsToStop.push(now.s3.pid);
		expect(now.s3.pid).not.toBe(lock.services.s3.pid);

		// SIGTERM to the npm process itself stops every service.
		first.child.kill('SIGTERM');
		const all = Object.values(now).map((s) => s.pid);
		// (the start, orphaned by npm's death, stops them one by one, then removes its lock)
		const lockPath = path.join(dataDir, 'start.lock');
		const until = Date.now() + 60_000;
		while ((all.some((pid) => proc.isAlive(pid)) || fs.existsSync(lockPath)) && Date.now() < until) await new Promise((r) => setTimeout(r, 200));
		expect(all.filter((pid) => proc.isAlive(pid))).toEqual([]);
		expect(await proc.isListening(ports.GLASSCRIB_DB_PORT)).toBe(false);
		expect(fs.existsSync(path.join(dataDir, 'start.lock'))).toBe(false);
	}, 300_000);

	it('stops everything, saying why, when a service cannot get its port back', async () => {
		const dataDir = sharedDataDir();
		const ports = await freePorts();
		const run = runStart(dataDir, ports);
		await run.waitFor('Services are running');
		const lock = lockOf(dataDir);
		pidsToStop.push(...Object.values(lock.services).map((s) => s.pid));
		// The mail fake dies and another program takes its port at once (a leftover, say).
		process.kill(lock.services.mail.pid, 'SIGKILL');
		let srv: net.Server | null = null;
		// (the supervisor waits 1 s before a restart; the port is free as soon as the process is dead)
		for (let i = 0; i < 100 && !srv; i++) {
			srv = await occupy(ports.GLASSCRIB_SMTP_PORT).catch(() => null);
			if (!srv) await new Promise((r) => setTimeout(r, 5));
		}
		try {
			expect(srv).not.toBeNull();
			expect(await run.exited).toBe(1);
			expect(run.output).toMatch(/The mail fake on 127\.0\.0\.1:\d+ stopped/);
			expect(run.output).toContain(`Could not start the mail fake again: Port ${ports.GLASSCRIB_SMTP_PORT} (mail fake) is in use by another program`);
			expect(run.output).toContain('Stopping everything');
			expect(proc.isAlive(lock.services.mariadb.pid)).toBe(false);
			expect(proc.isAlive(lock.services.s3.pid)).toBe(false);
		} finally {
			srv?.close();
		}
	}, 300_000);

	it('after a start killed with kill -9, the next one stops its leftovers and serves with services of its own', async () => {
		const dataDir = sharedDataDir();
		const ports = await freePorts();
		const first = runStart(dataDir, ports);
		await first.waitFor('Services are running');
		const before = lockOf(dataDir).services;
		pidsToStop.push(...Object.values(before).map((s) => s.pid));
		first.child.kill('SIGKILL');
		await first.exited;
		// its services live on, holding the ports (the case where S3 "started" on a port a leftover held)
		for (const s of Object.values(before)) expect(proc.isAlive(s.pid)).toBe(true);
		expect(await proc.isListening(ports.GLASSCRIB_S3_PORT)).toBe(true);

		const next = runStart(dataDir, ports);
		await next.waitFor('Services are running');
		expect(next.output).toContain('An earlier start of this data dir did not stop cleanly.');
		for (const name of ['mariadb', 's3', 'mail']) expect(next.output).toContain(`stopping ${name} (pid ${before[name].pid}) left running by an earlier start`);
		for (const s of Object.values(before)) expect(proc.isAlive(s.pid)).toBe(false);
		const after = lockOf(dataDir).services;
		pidsToStop.push(...Object.values(after).map((s) => s.pid));
		const identity = await (await fetch(`http://127.0.0.1:${ports.GLASSCRIB_S3_PORT}/.glasscrib-service`)).text();
		expect(identity).toMatch(/^glasscrib-s3-fake [0-9a-f]{16}$/);
		expect(after.s3.pid).not.toBe(before.s3.pid);
		next.child.kill('SIGTERM');
		expect(await next.exited).toBe(0);
		for (const s of Object.values(after)) expect(proc.isAlive(s.pid)).toBe(false);
	}, 300_000);
});

describe('a data dir made by an older start (root with an empty password, also over TCP)', () => {
	it('is made socket-only at the next start', async () => {
		const dataDir = path.join(tempDataDir(), 'mariadb');
		execFileSync('mariadb-install-db', ['--no-defaults', `--datadir=${dataDir}`, '--user=root', '--auth-root-authentication-method=normal', '--skip-test-db'], { stdio: 'ignore' });
		const port = await proc.freePort();
		const socket = path.join(dataDir, 'mariadb.sock');
		// As the older start ran it: plain mariadbd on the old data dir.
		const old = spawn('mariadbd', ['--no-defaults', `--datadir=${dataDir}`, '--user=root', '--bind-address=127.0.0.1', `--port=${port}`, `--socket=${socket}`, `--pid-file=${path.join(dataDir, 'mariadb.pid')}`, '--skip-log-bin'], {
			stdio: 'ignore'
		});
		started.push(old);
		const until = Date.now() + 60_000;
		while (!(fs.existsSync(socket) && (await proc.isListening(port))) && Date.now() < until) await new Promise((r) => setTimeout(r, 200));
		expect(await rootOverTcp(port)).toBe('connected'); // the defect, before the fix runs
		await mariadbLib.startMariadb({ dataDir, port, database: 'glasscrib', user: 'glasscrib', password: 'app-password-1234' });
		expect(await rootOverTcp(port)).toMatch(/^ER_ACCESS_DENIED/);
		const admin = await mysql.createConnection({ socketPath: socket, user: os.userInfo().username });
		const [rows] = (await admin.query("SELECT Host AS host FROM mysql.user WHERE User IN ('root', '')")) as unknown as [{ host: string }[]];
		await admin.end();
		expect(rows.map((r) => r.host)).toEqual(['localhost']);
		old.kill('SIGTERM');
		await new Promise((r) => old.once('exit', r));
	}, 120_000);
});
