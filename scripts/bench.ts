/**
 * `npm run bench`: runs every benchmark in tests/bench/ (each a standalone script that prints its
 * figures and ends with one JSON line) one after another, on an otherwise idle machine.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';

const dir = path.resolve('tests/bench');
const only = process.argv.slice(2);
const files = fs
	.readdirSync(dir)
	.filter((f) => f.endsWith('.ts') && !f.startsWith('_'))
	.filter((f) => !only.length || only.some((o) => f.includes(o)))
	.sort();
let failed = 0;
for (const f of files) {
	console.log(`\n== ${f} ==`);
	const r = spawnSync(process.execPath, ['--import', 'tsx', path.join(dir, f)], { stdio: 'inherit', env: process.env });
	if (r.status !== 0) failed++;
}
process.exit(failed ? 1 : 0);
