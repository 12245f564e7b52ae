// Small helpers for the service scripts: ports, waiting, child processes that stop with us.
import net from 'node:net';
import { spawn } from 'node:child_process';

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

/** Stops every child we started, last started first, waiting up to 10 s each. */
export async function stopChildren() {
	for (const child of [...children].reverse()) {
		if (child.exitCode !== null || child.signalCode !== null) continue;
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
		}, 10_000);
		await child.exited;
		clearTimeout(timer);
	}
}

/** Runs a command to completion, inheriting our terminal; rejects on a non-zero exit. */
export function run(command, args, { env, cwd, quiet } = {}) {
	return new Promise((resolve, reject) => {
		const child = spawn(command, args, {
			cwd,
			env: { ...process.env, ...env },
			stdio: quiet ? ['ignore', 'pipe', 'pipe'] : 'inherit'
		});
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
