import { execFile } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import { describe, expect, it } from 'vitest';
import { openApiDocument } from '$lib/server/api/openapi';

const run = promisify(execFile);

/**
 * An outside check of the served document: Redocly CLI's `lint` with its recommended rules (path
 * parameters defined, operation ids unique, valid schemas, …). Errors fail the test; warnings are printed.
 */
describe('OpenAPI document, linted by Redocly', () => {
	it('has no errors', async () => {
		const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'glasscrib-openapi-'));
		const file = path.join(dir, 'openapi.json');
		fs.writeFileSync(file, JSON.stringify(openApiDocument()));
		try {
			const bin = path.resolve('node_modules/.bin/redocly');
			const out = await run(bin, ['lint', '--format=json', file], {
				env: { ...process.env, REDOCLY_TELEMETRY: 'off', REDOCLY_SUPPRESS_UPDATE_NOTICE: 'true', NO_COLOR: '1' },
				maxBuffer: 64 * 1024 * 1024
			}).catch((e: { stdout?: string; stderr?: string }) => ({ stdout: e.stdout ?? '', stderr: e.stderr ?? '' }));
			const report = JSON.parse(out.stdout) as { totals: { errors: number; warnings: number }; problems: { ruleId: string; severity: string; message: string; location: { pointer: string }[] }[] };
			const errors = report.problems.filter((p) => p.severity === 'error').map((p) => `${p.ruleId} at ${p.location[0]?.pointer}: ${p.message}`);
			console.log(`redocly lint: ${report.totals.errors} errors, ${report.totals.warnings} warnings`);
			expect(errors).toEqual([]);
			expect(report.totals.errors).toBe(0);
		} finally {
			fs.rmSync(dir, { recursive: true, force: true });
		}
	}, 60_000);
});
