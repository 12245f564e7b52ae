import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';

const { dependencyDrift } = (await import(path.resolve('scripts/lib/deps.mjs'))) as { dependencyDrift: (root?: string) => string | null };

const dirs: string[] = [];
afterEach(() => {
	for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});

/** A checkout with a lock file and, optionally, npm's record of what it installed plus the package folders. */
function checkout(lock: Record<string, { version: string; optional?: boolean }>, installed?: Record<string, string>, folders = true) {
	const root = fs.mkdtempSync(path.join(os.tmpdir(), 'glasscrib-deps-'));
	dirs.push(root);
	fs.writeFileSync(path.join(root, 'package-lock.json'), JSON.stringify({ packages: { '': {}, ...lock } }));
	if (installed) {
		fs.mkdirSync(path.join(root, 'node_modules'), { recursive: true });
		const packages = Object.fromEntries(Object.entries(installed).map(([k, version]) => [k, { version }]));
		fs.writeFileSync(path.join(root, 'node_modules', '.package-lock.json'), JSON.stringify({ packages }));
		if (folders) {
			for (const k of Object.keys(installed)) {
				fs.mkdirSync(path.join(root, k), { recursive: true });
				fs.writeFileSync(path.join(root, k, 'package.json'), '{}');
			}
		}
	}
	return root;
}

describe('npm start / npm test install dependencies when node_modules does not match the lock file', () => {
	it('asks for an install on a fresh clone', () => {
		expect(dependencyDrift(checkout({ 'node_modules/a': { version: '1.0.0' } }))).toMatch(/missing/);
	});
	it('is satisfied when every package of the lock is installed at its version', () => {
		expect(dependencyDrift(checkout({ 'node_modules/a': { version: '1.0.0' } }, { 'node_modules/a': '1.0.0' }))).toBeNull();
	});
	it('installs a package a pull added, or one at another version', () => {
		const lock = { 'node_modules/a': { version: '1.0.0' }, 'node_modules/b': { version: '2.1.0' } };
		expect(dependencyDrift(checkout(lock, { 'node_modules/a': '1.0.0' }))).toBe('b 2.1.0 is not installed');
		expect(dependencyDrift(checkout(lock, { 'node_modules/a': '1.0.0', 'node_modules/b': '2.0.0' }))).toBe('b 2.1.0 is not installed');
	});
	it('trusts the folder, not only npm record (a record copied from another checkout)', () => {
		expect(dependencyDrift(checkout({ 'node_modules/a': { version: '1.0.0' } }, { 'node_modules/a': '1.0.0' }, false))).toBe('a 1.0.0 is not installed');
	});
	it('leaves optional packages (other platforms) alone', () => {
		expect(dependencyDrift(checkout({ 'node_modules/x-darwin': { version: '1.0.0', optional: true } }, {}))).toBeNull();
	});
});
