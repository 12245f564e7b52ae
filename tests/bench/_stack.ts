/**
 * The throwaway stack of a benchmark: MariaDB, the S3 fake and the mail fake on free loopback ports,
 * with their data in a temp folder of its own. Not a benchmark itself (`npm run bench` skips files
 * starting with an underscore).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';

// The stack scripts are plain JavaScript; loaded by a computed path so the type check stays out of them.
const scripts = (name: string) => new URL(`../../scripts/lib/${name}`, import.meta.url).href;
const { startStack } = (await import(scripts('stack.mjs'))) as {
	startStack: (o: { dataDir: string; ports: Record<string, number>; logDir: string; secrets: Record<string, string>; quiet?: boolean }) => Promise<Record<string, string>>;
};
const { freePort, stopChildren } = (await import(scripts('proc.mjs'))) as { freePort: () => Promise<number>; stopChildren: () => Promise<void> };

/** A fresh temp folder for a stack's data, named after the benchmark. */
export function benchDataDir(prefix: string): string {
	return fs.mkdtempSync(path.join(os.tmpdir(), prefix));
}

/**
 * Starts the services with their data in `dataDir` and puts the environment the app's modules read
 * into process.env (import those modules after this); returns that environment.
 */
export async function startBenchStack(dataDir: string): Promise<Record<string, string>> {
	const ports = { db: await freePort(), s3: await freePort(), smtp: await freePort() };
	const secrets = { AUTH_PEPPER: crypto.randomBytes(24).toString('base64url'), DB_PASSWORD: crypto.randomBytes(12).toString('base64url'), DEMO_PASSWORD: 'tarnwell-bench-2026' };
	const env = await startStack({ dataDir, ports, logDir: path.join(dataDir, 'logs'), secrets, quiet: true });
	Object.assign(process.env, env);
	return env;
}

/** Stops the services and removes their data. */
export async function stopBenchStack(dataDir: string): Promise<void> {
	await stopChildren();
	fs.rmSync(dataDir, { recursive: true, force: true });
}
