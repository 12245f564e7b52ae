import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { testEnv } from '../../support/env';

const run = (args: string[], env: Record<string, string>) =>
	spawnSync(process.execPath, ['--import', 'tsx', 'scripts/first-admin.ts', ...args], {
		encoding: 'utf8',
		env: { ...process.env, ...env }
	});

describe('scripts/first-admin.ts (first administrator of a deployment without demo accounts)', () => {
	it('refuses when an active administrator exists (the seeded test database has one)', () => {
		const r = run(['--email', 'second-admin@tarnwell.example', '--name', 'Second'], {
			DATABASE_URL: testEnv('DATABASE_URL'),
			ORIGIN: 'https://glasscrib.example.org'
		});
		expect(r.status).toBe(1);
		expect(r.stderr).toContain('An active administrator exists already');
		expect(r.stdout).not.toContain('/welcome/');
	});

	it('says what is missing when the input is bad', () => {
		const r = run(['--email', 'not-an-address', '--name', 'X'], { DATABASE_URL: testEnv('DATABASE_URL'), ORIGIN: 'https://x.example' });
		expect(r.status).toBe(2);
		expect(r.stderr).toContain('--email must be an e-mail address');
	});
});
