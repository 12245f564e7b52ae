import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import path from 'node:path';

type Plan = { missing: string[]; packages: string[]; action: 'none' | 'apt' | 'instruct'; commands: string[][]; message: string };
type Found = Record<string, string | null>;
const lib = (await import(path.resolve('scripts/lib/system-packages.mjs'))) as {
	planSystemPackages: (o: { found: Found; isRoot: boolean; hasApt: boolean; chromiumPathEnv?: string }) => Plan;
	findChromium: (o: { env: Record<string, string | undefined>; exists: (p: string) => boolean }) => string | null;
	findMariadb: (o: { lookup: (cmd: string) => string | null; exists: (p: string) => boolean }) => string | null;
};

describe('what npm start and npm test install (the decision, without apt)', () => {
	it('installs nothing when everything is there', () => {
		const plan = lib.planSystemPackages({ found: { mariadb: '/usr/sbin/mariadbd', chromium: '/usr/bin/chromium' }, isRoot: true, hasApt: true });
		expect(plan).toMatchObject({ action: 'none', missing: [], packages: [], commands: [] });
	});

	it('as root with apt: one apt-get update, then one install of exactly the missing packages', () => {
		const plan = lib.planSystemPackages({ found: { mariadb: '/usr/sbin/mariadbd', chromium: null }, isRoot: true, hasApt: true });
		expect(plan.action).toBe('apt');
		expect(plan.packages).toEqual(['chromium']);
		expect(plan.commands).toEqual([
			['apt-get', 'update', '-qq'],
			['apt-get', 'install', '-y', '-qq', '--no-install-recommends', 'chromium']
		]);
		const both = lib.planSystemPackages({ found: { mariadb: null, chromium: null }, isRoot: true, hasApt: true });
		expect(both.commands[1].slice(-3)).toEqual(['mariadb-server', 'mariadb-client', 'chromium']);
	});

	it('not root: no command, an instruction naming the package and the sudo line', () => {
		const plan = lib.planSystemPackages({ found: { mariadb: '/usr/sbin/mariadbd', chromium: null }, isRoot: false, hasApt: true });
		expect(plan.action).toBe('instruct');
		expect(plan.commands).toEqual([]);
		expect(plan.message).toContain('Chromium (for the browser tests) not found');
		expect(plan.message).toContain('sudo apt-get install chromium');
	});

	it('without apt (not Debian): names the packages to install some other way', () => {
		const plan = lib.planSystemPackages({ found: { mariadb: null }, isRoot: true, hasApt: false });
		expect(plan.action).toBe('instruct');
		expect(plan.message).toContain('mariadb-server, mariadb-client');
	});

	it('says when CHROMIUM_PATH points nowhere', () => {
		const plan = lib.planSystemPackages({ found: { chromium: null }, isRoot: true, hasApt: true, chromiumPathEnv: '/nowhere/chromium' });
		expect(plan.message).toContain('CHROMIUM_PATH=/nowhere/chromium does not exist');
	});

	it('finds Chromium at CHROMIUM_PATH only when that is set, else at Debian’s path', () => {
		const exists = (p: string) => p === '/usr/bin/chromium';
		expect(lib.findChromium({ env: {}, exists })).toBe('/usr/bin/chromium');
		expect(lib.findChromium({ env: { CHROMIUM_PATH: '/nowhere/chromium' }, exists })).toBeNull();
		expect(lib.findChromium({ env: {}, exists: () => false })).toBeNull();
	});

	it('needs both mariadbd and mariadb-install-db', () => {
		expect(lib.findMariadb({ lookup: (c) => (c === 'mariadbd' ? '/usr/sbin/mariadbd' : null), exists: () => true })).toBeNull();
		expect(lib.findMariadb({ lookup: (c) => `/usr/bin/${c}`, exists: () => false })).toBe('/usr/bin/mariadbd');
	});
});

describe('npm test -- --check-system (a child process, nothing installed)', () => {
	it('with CHROMIUM_PATH pointing nowhere, prints the apt plan (as root) or the instruction', () => {
		let out = '';
		let status = 0;
		try {
			out = execFileSync(process.execPath, ['scripts/test.mjs', '--check-system'], {
				env: { ...process.env, CHROMIUM_PATH: '/nowhere/chromium' },
				encoding: 'utf8',
				stdio: ['ignore', 'pipe', 'pipe'],
				timeout: 30_000
			});
		} catch (err) {
			const e = err as { stdout: string; stderr: string; status: number };
			out = e.stdout + e.stderr;
			status = e.status;
		}
		expect(out).toContain('chromium: missing');
		expect(out).toContain('CHROMIUM_PATH=/nowhere/chromium does not exist');
		if (process.getuid?.() === 0) {
			expect(status).toBe(0);
			expect(out).toContain('would run: apt-get update -qq');
			expect(out).toContain('would run: apt-get install -y -qq --no-install-recommends chromium');
		} else {
			expect(status).toBe(1);
			expect(out).toContain('apt-get install chromium');
			expect(out).not.toContain('would run');
		}
	});
});
