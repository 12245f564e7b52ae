// Dependency install step shared by `npm start` and `npm test`; imports nothing outside Node itself,
// so it runs on a fresh clone before node_modules exists.
import fs from 'node:fs';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');

export async function ensureDependencies() {
	if (fs.existsSync(path.join(ROOT, 'node_modules', '.package-lock.json'))) return;
	console.log('Installing dependencies (npm ci) ...');
	const r = spawnSync('npm', ['ci', '--no-audit', '--no-fund'], { cwd: ROOT, stdio: 'inherit' });
	if (r.status !== 0) {
		console.error('npm ci failed');
		process.exit(1);
	}
}
