/**
 * The catalogue list's FULLTEXT prefilter for text queries (`fulltextPrefilter`) must never drop a
 * row the LIKE conditions would match: each `+word*` term has to begin a word of any name that
 * contains the query. Words here are split the way InnoDB's full-text parser splits them for
 * ASCII text (runs of letters, digits and underscore; MariaDB documentation, "Full-Text Index
 * Overview", from memory).
 */
import { describe, expect, it } from 'vitest';
import { fulltextPrefilter } from '../../../src/lib/server/catalogue/list';
import { mulberry32 } from '../../../src/lib/prng';

const words = (s: string) => s.toLowerCase().split(/[^a-z0-9_]+/).filter(Boolean);

const prng = mulberry32;

describe('fulltextPrefilter', () => {
	it('uses only the words after the first, of indexable length, not stopword prefixes', () => {
		expect(fulltextPrefilter('f 100')).toBe('+100*');
		expect(fulltextPrefilter('BK-0420')).toBe('+0420*');
		expect(fulltextPrefilter('convex')).toBeNull();
		expect(fulltextPrefilter('lens wit')).toBeNull(); // "wit" begins the stopword "with"
		expect(fulltextPrefilter('a b c')).toBeNull();
		expect(fulltextPrefilter('plano convex Ø25.4 f 100')).toBe('+convex* +100*');
	});

	it('is a necessary condition: every name containing the query has each term as a word prefix', () => {
		const r = prng(5);
		const pieces = ['Plano-convex', 'Ø25.4', 'f', '100.0', 'MgF2', 'BBAR', '400-700', 'doublet', 'K/3', 'lens', '(spare)', 'with', 'about', 'x_ray', 'CaF2'];
		let checked = 0;
		for (let i = 0; i < 3000; i++) {
			const name = Array.from({ length: 3 + Math.floor(r() * 5) }, () => pieces[Math.floor(r() * pieces.length)]).join(r() < 0.5 ? ' ' : '-');
			const a = Math.floor(r() * name.length);
			const b = a + 1 + Math.floor(r() * Math.min(24, name.length - a));
			const q = name.slice(a, b).trim();
			if (!q) continue;
			const ft = fulltextPrefilter(q);
			if (!ft) continue;
			const nameWords = words(name);
			for (const term of ft.split(' ')) {
				const w = term.slice(1, -1).toLowerCase();
				expect(nameWords.some((x) => x.startsWith(w)), `${q} in ${name}: ${term}`).toBe(true);
				checked++;
			}
		}
		expect(checked).toBeGreaterThan(500);
	});
});
