/**
 * The file a `worker_threads` worker starts from. In the built app a worker module that the server imports
 * dynamically is its own chunk, and its `import.meta.url` (the module's `selfUrl`) is that file. Under vitest, tsx
 * or `vite dev` it is a `.ts` file that Node cannot start: it is bundled once per process with esbuild into a temp
 * `.mjs` (removed at exit). Used by the solver's pool and the photo thumbnails.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

export async function workerFileOf(
	selfUrl: string,
	name: string,
	opts: { logLevel?: 'error' | 'warning'; requireShim?: boolean } = {}
): Promise<URL> {
	if (!selfUrl.endsWith('.ts')) return new URL(selfUrl);
	const esbuild = await import('esbuild');
	const out = path.join(os.tmpdir(), `glasscrib-${name}-${process.pid}.mjs`);
	await esbuild.build({
		entryPoints: [fileURLToPath(selfUrl)],
		bundle: true,
		platform: 'node',
		format: 'esm',
		target: 'node20',
		outfile: out,
		logLevel: opts.logLevel ?? 'warning',
		// Some dependencies (jimp's) use require(): give the ES module bundle one.
		...(opts.requireShim ? { banner: { js: "import { createRequire as __cr } from 'node:module'; const require = __cr(import.meta.url);" } } : {})
	});
	process.once('exit', () => fs.rmSync(out, { force: true }));
	return pathToFileURL(out);
}
