// Dependency install step shared by `npm start` and `npm test`; imports nothing outside Node itself,
// so it runs on a fresh clone before node_modules exists.
import fs from 'node:fs';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');

/**
 * Why node_modules does not match package-lock.json, or null when it does: missing, or a package of the lock
 * (optional ones aside: those for other platforms are never installed) absent or at another version in npm's
 * record of what it installed (node_modules/.package-lock.json) or its folder. So a pull that adds or bumps a dependency
 * installs it on the next start or test run.
 */
export function dependencyDrift(root = ROOT) {
	const hidden = path.join(root, 'node_modules', '.package-lock.json');
	if (!fs.existsSync(hidden)) return 'node_modules is missing';
	const want = JSON.parse(fs.readFileSync(path.join(root, 'package-lock.json'), 'utf8')).packages ?? {};
	const have = JSON.parse(fs.readFileSync(hidden, 'utf8')).packages ?? {};
	for (const [key, entry] of Object.entries(want)) {
		if (!key || entry.optional || entry.link) continue;
		if (have[key]?.version !== entry.version || !fs.existsSync(path.join(root, key, 'package.json'))) {
			return `${key.replace(/^node_modules\//, '')} ${entry.version} is not installed`;
		}
	}
	return null;
}

export async function ensureDependencies() {
	const drift = dependencyDrift();
	if (!drift) return;
	console.log(`Installing dependencies (npm ci: ${drift}) ...`);
	const r = spawnSync('npm', ['ci', '--no-audit', '--no-fund'], { cwd: ROOT, stdio: 'inherit' });
	if (r.status !== 0) {
		console.error('npm ci failed');
		process.exit(1);
	}
}
