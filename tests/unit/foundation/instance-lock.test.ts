// The lock that keeps one npm start per data dir, and what a start may stop of an earlier one's.
// Stand-in processes (node sleeping with the right command line) play the start and its mariadbd.
import { afterAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

type Stale = { pid: number; services: Record<string, { pid: number; signature: string }> } | null;
const lock = (await import(path.resolve('scripts/lib/instance-lock.mjs'))) as {
	acquireLock: (dir: string, info?: object) => { ok: boolean; owner?: { pid: number }; stale?: Stale; lock?: { release: () => void } };
	stopLeftovers: (dir: string, stale: Stale, o?: { log?: (s: string) => void }) => Promise<{ name: string; pid: number }[]>;
};

const children: ChildProcess[] = [];
const dirs: string[] = [];
afterAll(() => {
	for (const c of children) c.kill('SIGKILL');
	for (const d of dirs) fs.rmSync(d, { recursive: true, force: true });
});

function tempDir() {
	const d = fs.mkdtempSync(path.join(os.tmpdir(), 'glasscrib-lock-test-'));
	dirs.push(d);
	return d;
}

/** A node process that sleeps, with `args` in its command line; it prints the pids it starts. */
function standIn(script: string, ...args: string[]) {
	const child = spawn(process.execPath, ['-e', script, '--', ...args], { stdio: ['ignore', 'pipe', 'inherit'] });
	children.push(child);
	return child;
}
const SLEEP = 'setInterval(() => {}, 1000)';
const alive = (pid: number) => {
	try {
		process.kill(pid, 0);
		return true;
	} catch {
		return false;
	}
};
const until = async (check: () => boolean, ms = 5000) => {
	const end = Date.now() + ms;
	while (!check() && Date.now() < end) await new Promise((r) => setTimeout(r, 50));
};

describe('one start per data dir', () => {
	it('is refused while the owner is a live start, and taken over from a dead one with its record', async () => {
		const dir = tempDir();
		const owner = standIn(SLEEP, 'scripts/start.mjs');
		await until(() => !!owner.pid);
		fs.writeFileSync(path.join(dir, 'start.lock'), JSON.stringify({ pid: owner.pid, services: { s3: { pid: 1, signature: 'x' } } }));
		const refused = lock.acquireLock(dir);
		expect(refused.ok).toBe(false);
		expect(refused.owner?.pid).toBe(owner.pid);

		owner.kill('SIGKILL');
		await new Promise((r) => owner.once('exit', r));
		const taken = lock.acquireLock(dir);
		expect(taken.ok).toBe(true);
		expect(taken.stale?.services.s3.pid).toBe(1);
		expect(JSON.parse(fs.readFileSync(path.join(dir, 'start.lock'), 'utf8')).pid).toBe(process.pid);
		taken.lock!.release();
		expect(fs.existsSync(path.join(dir, 'start.lock'))).toBe(false);
	});

	it('a process that is not a start does not hold the lock', () => {
		const dir = tempDir();
		fs.writeFileSync(path.join(dir, 'start.lock'), JSON.stringify({ pid: process.pid, services: {} }));
		// (our own pid: alive, but a vitest worker, not scripts/start.mjs)
		expect(lock.acquireLock(dir).ok).toBe(true);
	});
});

describe('leftovers', () => {
	it('stops an orphaned mariadbd of the data dir (pid file) and recorded services whose command line matches', async () => {
		const dir = tempDir();
		const dbDir = path.join(dir, 'mariadb');
		fs.mkdirSync(dbDir);
		const db = standIn(SLEEP, `--datadir=${dbDir}`);
		const s3 = standIn(SLEEP, 's3-fake.mjs --port 1');
		const stranger = standIn(SLEEP, 'something-else');
		await until(() => !!db.pid && !!s3.pid && !!stranger.pid);
		fs.writeFileSync(path.join(dbDir, 'mariadb.pid'), String(db.pid));
		const stale = { pid: 999999, services: { s3: { pid: s3.pid!, signature: 's3-fake.mjs --port 1' }, mail: { pid: stranger.pid!, signature: 'mail-fake.mjs' } } };
		const stopped = await lock.stopLeftovers(dir, stale, { log: () => undefined });
		expect(stopped.map((s) => s.name).sort()).toEqual(['mariadb', 's3']);
		await until(() => !alive(db.pid!) && !alive(s3.pid!));
		expect([alive(db.pid!), alive(s3.pid!), alive(stranger.pid!)]).toEqual([false, false, true]);
	});

	it('never stops a mariadbd whose parent is a running start (one from before the lock file)', async () => {
		const dir = tempDir();
		const dbDir = path.join(dir, 'mariadb');
		fs.mkdirSync(dbDir);
		// a stand-in "start" that runs a stand-in "mariadbd" as its child
		const start = standIn(
			`const c = require('child_process').spawn(process.execPath, ['-e', '${SLEEP}', '--', '--datadir=${dbDir}'], { stdio: 'ignore' }); console.log(c.pid); ${SLEEP}`,
			'scripts/start.mjs'
		);
		const dbPid = await new Promise<number>((resolve) => start.stdout!.once('data', (d) => resolve(Number(String(d).trim()))));
		fs.writeFileSync(path.join(dbDir, 'mariadb.pid'), String(dbPid));
		await expect(lock.stopLeftovers(dir, null, { log: () => undefined })).rejects.toThrow(`belongs to an npm start that is still running (pid ${start.pid})`);
		expect(alive(dbPid)).toBe(true);
		start.kill('SIGKILL');
		process.kill(dbPid, 'SIGKILL');
	});
});
