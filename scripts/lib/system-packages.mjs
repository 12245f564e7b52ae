// The Debian packages `npm start` and `npm test` need, found or installed the same way for both:
// with apt-get when we run as root, else a clear instruction. Imports nothing outside Node itself.
import fs from 'node:fs';
import { execFileSync, spawnSync } from 'node:child_process';

/** What each need is, how to find it on the machine, and which Debian packages provide it. */
export const NEEDS = {
	mariadb: { what: 'MariaDB server', packages: ['mariadb-server', 'mariadb-client'] },
	chromium: { what: "Chromium (for the browser tests)", packages: ['chromium'] }
};

/** Path of a command on PATH, or null. */
export function which(cmd) {
	try {
		return execFileSync('sh', ['-c', 'command -v "$1"', 'sh', cmd], { encoding: 'utf8' }).trim() || null;
	} catch {
		return null;
	}
}

/** mariadbd and mariadb-install-db, or null when either is missing. */
export function findMariadb({ lookup = which, exists = fs.existsSync } = {}) {
	const server = lookup('mariadbd') ?? (exists('/usr/sbin/mariadbd') ? '/usr/sbin/mariadbd' : null);
	const installDb = lookup('mariadb-install-db');
	return server && installDb ? server : null;
}

/**
 * The Chromium the browser tests use. CHROMIUM_PATH, when set, is the only candidate (a wrong path
 * is reported, not silently replaced); else Debian's /usr/bin/chromium (or chromium-browser).
 */
export function findChromium({ env = process.env, exists = fs.existsSync } = {}) {
	const candidates = env.CHROMIUM_PATH ? [env.CHROMIUM_PATH] : ['/usr/bin/chromium', '/usr/bin/chromium-browser'];
	return candidates.find((p) => exists(p)) ?? null;
}

/**
 * Decides what to do about missing needs (pure, unit-tested).
 * `found`: { [need]: path | null }; `isRoot`, `hasApt`: facts about this machine;
 * `chromiumPathEnv`: the CHROMIUM_PATH the user set, if any.
 * Returns { missing, packages, action: 'none' | 'apt' | 'instruct', commands, message }.
 */
export function planSystemPackages({ found, isRoot, hasApt, chromiumPathEnv }) {
	const missing = Object.keys(found).filter((need) => !found[need]);
	const packages = missing.flatMap((need) => NEEDS[need].packages);
	if (!missing.length) return { missing, packages, action: 'none', commands: [], message: '' };
	const whats = missing.map((need) => NEEDS[need].what).join(' and ');
	const notes = [];
	if (missing.includes('chromium') && chromiumPathEnv) {
		notes.push(`CHROMIUM_PATH=${chromiumPathEnv} does not exist; after the install, unset it to use /usr/bin/chromium.`);
	}
	if (isRoot && hasApt) {
		const commands = [
			['apt-get', 'update', '-qq'],
			['apt-get', 'install', '-y', '-qq', '--no-install-recommends', ...packages]
		];
		return {
			missing,
			packages,
			action: 'apt',
			commands,
			message: [`${whats} not found: installing the Debian package${packages.length > 1 ? 's' : ''} ${packages.join(', ')} (apt-get).`, ...notes].join('\n')
		};
	}
	const how = hasApt
		? `sudo apt-get install ${packages.join(' ')}`
		: `install the Debian package${packages.length > 1 ? 's' : ''} ${packages.join(', ')} (or your system's equivalent)`;
	return {
		missing,
		packages,
		action: 'instruct',
		commands: [],
		message: [`${whats} not found. Install ${packages.length > 1 ? 'them' : 'it'} first: ${how}, then run this again.`, ...notes].join('\n')
	};
}

/** Facts about this machine for planSystemPackages. */
export function machineFacts() {
	return { isRoot: process.getuid?.() === 0, hasApt: !!which('apt-get') };
}

/**
 * Finds every need in `needs` and installs what is missing (apt-get as root), or throws with the
 * instruction. With `dryRun`, prints the plan and the commands instead of running them.
 * Returns { found, plan } where `found` maps each need to its path (after installing).
 */
export function ensureSystemPackages(needs, { dryRun = false, env = process.env, log = console.log } = {}) {
	const finders = { mariadb: () => findMariadb(), chromium: () => findChromium({ env }) };
	const findAll = () => Object.fromEntries(needs.map((need) => [need, finders[need]()]));
	let found = findAll();
	const plan = planSystemPackages({ found, ...machineFacts(), chromiumPathEnv: env.CHROMIUM_PATH });
	if (plan.action === 'none') return { found, plan };
	if (plan.action === 'instruct') {
		if (dryRun) {
			log(plan.message);
			return { found, plan };
		}
		throw new Error(plan.message);
	}
	log(plan.message);
	for (const [cmd, ...args] of plan.commands) {
		if (dryRun) {
			log(`would run: ${cmd} ${args.join(' ')}`);
			continue;
		}
		const r = spawnSync(cmd, args, { stdio: 'inherit', env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' } });
		if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} failed (exit ${r.status}). Install ${plan.packages.join(' ')} by hand, then run this again.`);
	}
	if (dryRun) return { found, plan };
	// After apt, a wrong CHROMIUM_PATH is ignored in favour of the package just installed.
	found = Object.fromEntries(needs.map((need) => [need, need === 'chromium' ? findChromium({ env: {} }) : finders[need]()]));
	const still = needs.filter((need) => !found[need]);
	if (still.length) throw new Error(`Still missing after apt-get: ${still.map((n) => NEEDS[n].what).join(', ')}.`);
	return { found, plan };
}
