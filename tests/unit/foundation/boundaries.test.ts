/**
 * Module boundaries that the code keeps by rule (DEVELOPERS.md, "Architecture"): each is checked here by
 * reading the sources, so that a new call site that goes around a boundary fails a test and names its file.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

/** Every .ts / .svelte file below `dir` (relative paths, forward slashes). */
function sources(dir: string): string[] {
	return fs
		.readdirSync(dir, { recursive: true, encoding: 'utf8' })
		.filter((f) => /\.(ts|svelte|mjs)$/.test(f))
		.map((f) => path.join(dir, f).split(path.sep).join('/'))
		.sort();
}

const SRC = sources('src');
const ALL = [...SRC, ...sources('seed'), ...sources('scripts'), ...sources('tests')];
const read = (f: string) => fs.readFileSync(f, 'utf8');
const offenders = (files: string[], pattern: RegExp, allowed: string[]) =>
	files.filter((f) => !allowed.includes(f) && pattern.test(read(f)));

describe('module boundaries', () => {
	it('finds the sources it checks', () => {
		expect(SRC).toContain('src/lib/server/auth/sessions.ts');
		expect(SRC).toContain('src/lib/server/stock/version.ts');
		expect(SRC.filter((f) => f.startsWith('src/lib/server/imports/')).length).toBeGreaterThan(5);
	});

	it('only auth/sessions.ts writes the sessions table', () => {
		const write = /\.(insert|update|delete)\(\s*(t\.)?sessions\b/;
		expect(offenders(SRC, write, ['src/lib/server/auth/sessions.ts'])).toEqual([]);
		expect(write.test(read('src/lib/server/auth/sessions.ts'))).toBe(true);
	});

	it('the stock version is bumped only through changeStock', () => {
		expect(offenders(ALL, /bumpStockVersion/, ['src/lib/server/stock/version.ts', 'tests/unit/foundation/boundaries.test.ts'])).toEqual([]);
	});

	it('one rule decides whether a reservation is active, on the database clock', () => {
		const home = 'src/lib/server/stock/active-reservation.ts';
		// A comparison of `until` in the query builder, or in hand-written SQL over a reservations alias.
		const judged = /\b(gt|gte|lt|lte)\(\s*reservations\.until\b|\b\w+\.until\s*[<>]=?\s*(utc_timestamp|now|current_timestamp)/i;
		expect(offenders(SRC, judged, [home])).toEqual([]);
		expect(judged.test(read(home))).toBe(true);
		// …and no listed state from the app's clock.
		expect(offenders(SRC, /until\.getTime\(\)\s*[<>]=?\s*Date\.now\(\)/, [])).toEqual([]);
	});

	it('the importer reads the catalogue only through its public index', () => {
		const imports = SRC.filter((f) => f.startsWith('src/lib/server/imports/'));
		const internal = /from\s+'(\$lib\/server\/catalogue\/[^']+|\.\.\/catalogue\/[^']*)'/;
		expect(imports.filter((f) => internal.test(read(f)))).toEqual([]);
		expect(imports.some((f) => /from\s+'\$lib\/server\/catalogue'/.test(read(f)))).toBe(true);
	});

	it('the pure search code (lib/solver/search) imports neither the server, the framework, node nor $lib', () => {
		const search = SRC.filter((f) => f.startsWith('src/lib/solver/search/'));
		expect(search).toContain('src/lib/solver/search/search-kernel.ts');
		expect(search).toContain('src/lib/solver/search/seidel-poly.ts');
		expect(search.filter((f) => /from\s+'(\$lib|\$app|@sveltejs|node:|[^'.][^']*)'|from\s+'[^']*\/server\//.test(read(f)))).toEqual([]);
		expect(SRC.filter((f) => f.startsWith('src/lib/server/solver/') && /search-kernel|seidel-poly/.test(path.basename(f)))).toEqual([]);
	});

	it('the optics core and solver take their numerical tolerances from optics/tolerances.ts', () => {
		const home = 'src/lib/optics/tolerances.ts';
		const defined = /^(export )?const (VERIFY_TOL|DOUBLE_TOL|AFOCAL_TOL|TOUCH_TOL|BEHIND_TOL_MM|VERIFY_B_TOL_MM|VERIFY_A_TOL)\b/m;
		expect(offenders(SRC, defined, [home])).toEqual([]);
		expect(defined.test(read(home))).toBe(true);
	});
});
