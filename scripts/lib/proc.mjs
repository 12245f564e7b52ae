// Small helpers for the service scripts: ports, waiting, child processes that stop with us.
import fs from 'node:fs';
import net from 'node:net';
import { spawn, spawnSync } from 'node:child_process';

/** True when something accepts TCP connections on host:port. */
export function isListening(port, host = '127.0.0.1') {
	return new Promise((resolve) => {
		const socket = net.connect({ port, host });
		socket.once('connect', () => {
			socket.destroy();
			resolve(true);
		});
		socket.once('error', () => resolve(false));
		socket.setTimeout(1000, () => {
			socket.destroy();
			resolve(false);
		});
	});
}

/** A free TCP port on loopback, chosen by the kernel. */
export function freePort() {
	return new Promise((resolve, reject) => {
		const srv = net.createServer();
		srv.once('error', reject);
		srv.listen(0, '127.0.0.1', () => {
			const { port } = srv.address();
			srv.close(() => resolve(port));
		});
	});
}

/** Polls `check` until it returns true or `timeoutMs` passes. */
export async function waitFor(what, check, timeoutMs = 30_000, intervalMs = 100) {
	const start = Date.now();
	let lastError;
	while (Date.now() - start < timeoutMs) {
		try {
			if (await check()) return;
		} catch (err) {
			lastError = err;
		}
		await new Promise((r) => setTimeout(r, intervalMs));
	}
	throw new Error(`${what} did not become ready within ${timeoutMs} ms${lastError ? `: ${lastError.message}` : ''}`);
}

const children = new Set();

/**
 * Starts a long-running child in its own process group (so a terminal Ctrl-C reaches only us and we
 * stop it in order). Its output goes to `logFile` when given, else to ours with a prefix.
 */
export function startChild(name, command, args, { env, logStream, cwd } = {}) {
	const child = spawn(command, args, {
		cwd,
		env: { ...process.env, ...env },
		detached: true,
		stdio: ['ignore', 'pipe', 'pipe']
	});
	child.serviceName = name;
	const sink = (chunk) => {
		if (logStream) logStream.write(chunk);
		else process.stdout.write(`[${name}] ${chunk}`);
	};
	child.stdout.on('data', sink);
	child.stderr.on('data', sink);
	child.exited = new Promise((resolve) => child.once('exit', (code, signal) => resolve({ code, signal })));
	children.add(child);
	child.once('exit', () => children.delete(child));
	return child;
}

/** True while a child we started has not exited. */
export function isRunning(child) {
	return !!child && child.exitCode === null && child.signalCode === null;
}

/** Stops one child (its whole process group): SIGTERM, then SIGKILL after `graceMs`. */
export async function stopChild(child, graceMs = 10_000) {
	if (!isRunning(child)) return;
	try {
		process.kill(-child.pid, 'SIGTERM');
	} catch {
		/* already gone */
	}
	const timer = setTimeout(() => {
		try {
			process.kill(-child.pid, 'SIGKILL');
		} catch {
			/* gone */
		}
	}, graceMs);
	await child.exited;
	clearTimeout(timer);
}

/** Stops every child we started, last started first, waiting up to 10 s each; and any `run` still going. */
export async function stopChildren() {
	await Promise.all([...tasks].map((task) => stopChild(task, 5_000)));
	for (const child of [...children].reverse()) await stopChild(child);
}

/**
 * Best effort: which process listens on 127.0.0.1:port ("pid 123, node"), from `ss -ltnp`
 * (needs iproute2; other users' processes show only to root). Null when unknown.
 */
export function portOwner(port) {
	const r = spawnSync('ss', ['-ltnpH', `sport = :${port}`], { encoding: 'utf8' });
	if (r.status !== 0 || !r.stdout) return null;
	const m = /users:\(\("([^"]+)",pid=(\d+)/.exec(r.stdout);
	return m ? { pid: Number(m[2]), name: m[1] } : null;
}

/** The parent pid of a process, from /proc (Linux), or null. */
export function parentOf(pid) {
	try {
		const stat = fs.readFileSync(`/proc/${pid}/stat`, 'utf8');
		return Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]);
	} catch {
		return null;
	}
}

/** The command line of a process (Linux), or ''. */
export function commandLine(pid) {
	try {
		return fs.readFileSync(`/proc/${pid}/cmdline`, 'utf8').split('\0').join(' ').trim();
	} catch {
		return '';
	}
}

/** True when a process with this pid exists. */
export function isAlive(pid) {
	try {
		process.kill(pid, 0);
		return true;
	} catch (err) {
		return err.code === 'EPERM';
	}
}

/**
 * Calls `onGone` once when the process that started us goes away. `npm start` runs us through
 * `sh -c`: a SIGTERM to npm kills that shell but never reaches us, so we watch our parent and, when it
 * is a shell, its parent (npm) too.
 */
export function watchParent(onGone, intervalMs = 500) {
	const parent = process.ppid;
	const shell = /(^|\/)(sh|dash|bash)( |$)/.test(commandLine(parent));
	const grandparent = shell ? parentOf(parent) : null;
	const timer = setInterval(() => {
		const gone = process.ppid !== parent || (grandparent !== null && grandparent > 1 && !isAlive(grandparent));
		if (gone) {
			clearInterval(timer);
			onGone();
		}
	}, intervalMs);
	timer.unref();
	return () => clearInterval(timer);
}

/** Commands `run` has started and that have not ended (a build, a seed): stopChildren stops them too. */
const tasks = new Set();

/**
 * Runs a command to completion, inheriting our terminal; rejects on a non-zero exit. It runs in a
 * process group of its own, so that stopping us mid-way (SIGTERM to npm) also stops it and what it
 * started (npx → vite build).
 */
export function run(command, args, { env, cwd, quiet } = {}) {
	return new Promise((resolve, reject) => {
		const child = spawn(command, args, {
			cwd,
			env: { ...process.env, ...env },
			detached: true,
			stdio: quiet ? ['ignore', 'pipe', 'pipe'] : ['ignore', 'inherit', 'inherit']
		});
		child.exited = new Promise((done) => child.once('exit', (code, signal) => done({ code, signal })));
		tasks.add(child);
		child.once('exit', () => tasks.delete(child));
		let output = '';
		if (quiet) {
			child.stdout.on('data', (c) => (output += c));
			child.stderr.on('data', (c) => (output += c));
		}
		child.once('error', reject);
		child.once('exit', (code) => {
			if (code === 0) resolve(output);
			else reject(new Error(`${command} ${args.join(' ')} exited with ${code}${quiet ? `\n${output}` : ''}`));
		});
	});
}

/** The variable that chooses each service's port for `npm start`. */
export const PORT_VARIABLES = {
	MariaDB: 'GLASSCRIB_DB_PORT',
	'S3 fake': 'GLASSCRIB_S3_PORT',
	'mail fake': 'GLASSCRIB_SMTP_PORT',
	app: 'PORT'
};

/** The error for a port that another program holds: which port, whose, and the variable that picks another. */
export function portTakenMessage(service, port, owner = portOwner(port)) {
	const variable = PORT_VARIABLES[service] ?? 'PORT';
	const who = owner ? ` (pid ${owner.pid}, ${owner.name})` : '';
	return `Port ${port} (${service}) is in use by another program${who}. Stop that program, or choose another port with ${variable}, e.g. ${variable}=${port + 1} npm start`;
}

/** Refuses (throws) when something already listens on the port. */
export async function assertPortFree(service, port) {
	if (await isListening(port)) {
		const err = new Error(portTakenMessage(service, port));
		err.code = 'PORT_TAKEN';
		throw err;
	}
}
