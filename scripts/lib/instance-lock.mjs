// One `npm start` per data dir: a lock file names the start that owns the dir and the services it
// started. A second start finds the owner alive and leaves everything alone; a start that finds the
// owner dead stops that owner's leftover services (only pids it recorded, checked by command line).
import fs from 'node:fs';
import path from 'node:path';
import { commandLine, isAlive, parentOf } from './proc.mjs';

/** The lock file of a data dir. */
export const lockFile = (dataDir) => path.join(dataDir, 'start.lock');

function readLock(file) {
	try {
		return JSON.parse(fs.readFileSync(file, 'utf8'));
	} catch {
		return null;
	}
}

/** True when `pid` is a running `npm start` (scripts/start.mjs). */
function isStartProcess(pid) {
	return isAlive(pid) && /scripts\/start\.mjs/.test(commandLine(pid));
}

/**
 * Takes the lock of `dataDir`. Returns { ok: true, lock, stale } (stale: the previous owner's record,
 * whose leftovers the caller should stop) or { ok: false, owner } when a live start holds it.
 */
export function acquireLock(dataDir, info = {}) {
	fs.mkdirSync(dataDir, { recursive: true });
	const file = lockFile(dataDir);
	for (let attempt = 0; attempt < 3; attempt++) {
		const lock = { pid: process.pid, startedAt: new Date().toISOString(), services: {}, ...info };
		try {
			fs.writeFileSync(file, JSON.stringify(lock), { flag: 'wx', mode: 0o600 });
			return { ok: true, lock: createLockHandle(file, lock), stale: null };
		} catch (err) {
			if (err.code !== 'EEXIST') throw err;
		}
		const owner = readLock(file);
		if (owner && owner.pid !== process.pid && isStartProcess(owner.pid)) return { ok: false, owner };
		// The owner is gone (or the file is unreadable): take the lock over, keeping its record.
		const staleFile = `${file}.${process.pid}.stale`;
		try {
			fs.renameSync(file, staleFile);
		} catch {
			continue; // someone else took it over first: look again
		}
		fs.rmSync(staleFile, { force: true });
		try {
			fs.writeFileSync(file, JSON.stringify(lock), { flag: 'wx', mode: 0o600 });
			return { ok: true, lock: createLockHandle(file, lock), stale: owner };
		} catch (err) {
			if (err.code !== 'EEXIST') throw err;
		}
	}
	const owner = readLock(file);
	return { ok: false, owner };
}

function createLockHandle(file, lock) {
	return {
		/** Records a service's pid, so that a later start can stop it if we die without cleaning up. */
		record(name, pid, signature) {
			lock.services[name] = { pid, signature };
			fs.writeFileSync(file, JSON.stringify(lock), { mode: 0o600 });
		},
		update(fields) {
			Object.assign(lock, fields);
			fs.writeFileSync(file, JSON.stringify(lock), { mode: 0o600 });
		},
		release() {
			const now = readLock(file);
			if (now?.pid === process.pid) fs.rmSync(file, { force: true });
		}
	};
}

/**
 * Stops the services a dead start left running: the pids its lock recorded (when their command line
 * still contains the recorded signature), and a mariadbd of this data dir from its pid file (starts
 * before the lock existed recorded nothing). Waits up to `timeoutMs` for each; returns what it stopped.
 */
export async function stopLeftovers(dataDir, stale, { timeoutMs = 20_000, log = console.log } = {}) {
	const targets = [];
	for (const [name, { pid, signature }] of Object.entries(stale?.services ?? {})) {
		if (pid && isAlive(pid) && commandLine(pid).includes(signature)) targets.push({ name, pid });
	}
	const dbDir = path.join(dataDir, 'mariadb');
	let pid = 0;
	try {
		pid = Number(fs.readFileSync(path.join(dbDir, 'mariadb.pid'), 'utf8').trim());
	} catch {
		/* no pid file */
	}
	if (pid && isAlive(pid) && commandLine(pid).includes(`--datadir=${dbDir}`) && !targets.some((t) => t.pid === pid)) {
		// A start from before the lock file may still be running it: never stop a live start's database.
		const parent = parentOf(pid);
		if (parent && parent > 1 && isStartProcess(parent)) {
			throw new Error(`MariaDB of this data dir (pid ${pid}) belongs to an npm start that is still running (pid ${parent}). Stop that one first.`);
		}
		targets.push({ name: 'mariadb', pid });
	}
	for (const { name, pid } of targets) {
		log(`  stopping ${name} (pid ${pid}) left running by an earlier start`);
		try {
			process.kill(pid, 'SIGTERM');
		} catch {
			continue;
		}
		const until = Date.now() + timeoutMs;
		while (isAlive(pid) && Date.now() < until) await new Promise((r) => setTimeout(r, 100));
		if (isAlive(pid)) {
			try {
				process.kill(pid, 'SIGKILL');
			} catch {
				/* gone */
			}
		}
	}
	return targets;
}
