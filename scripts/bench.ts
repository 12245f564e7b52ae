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
// The solver benches import modules that use `$lib`, which resolves through .svelte-kit/tsconfig.json:
// generate it first (a fresh clone has none, and the bench then fails with "Cannot find package '$lib'").
spawnSync('npx', ['svelte-kit', 'sync'], { stdio: 'inherit' });
let failed = 0;
for (const f of files) {
	console.log(`\n== ${f} ==`);
	const r = spawnSync(process.execPath, ['--import', 'tsx', path.join(dir, f)], { stdio: 'inherit', env: process.env });
	if (r.status !== 0) failed++;
}
process.exit(failed ? 1 : 0);
