import { describe, expect, it } from 'vitest';
import { formatDate, formatDateTime, glassesOf, kindLabel, KIND_LABELS, stockWords } from '$lib/format';
import { PART_KINDS } from '$lib/server/db/schema';

describe('one date format for the pages', () => {
	it('writes day, short month, year and the time to the minute (24 h)', () => {
		expect(formatDateTime('2026-12-02T04:46:59Z', 'UTC')).toBe('2 Dec 2026, 04:46');
		expect(formatDateTime('2026-07-15T23:05:00Z', 'UTC')).toBe('15 Jul 2026, 23:05');
		expect(formatDateTime(new Date(Date.UTC(2026, 0, 1, 0, 0)), 'UTC')).toBe('1 Jan 2026, 00:00');
	});

	it('uses the time zone it is given', () => {
		// 04:46 UTC is 05:46 in Berlin in winter (UTC+1), and the day changes at 23:30 UTC in Tokyo (UTC+9).
		expect(formatDateTime('2026-12-02T04:46:00Z', 'Europe/Berlin')).toBe('2 Dec 2026, 05:46');
		expect(formatDate('2026-12-02T23:30:00Z', 'Asia/Tokyo')).toBe('3 Dec 2026');
	});

	it('gives a dash for a missing or unreadable date', () => {
		expect(formatDateTime(null)).toBe('—');
		expect(formatDateTime('')).toBe('—');
		expect(formatDateTime('not a date')).toBe('—');
		expect(formatDate(undefined)).toBe('—');
	});
});

describe('part kinds and glasses as people read them', () => {
	it('has a label for every kind the schema knows', () => {
		expect(Object.keys(KIND_LABELS).sort()).toEqual([...PART_KINDS].sort());
		expect(kindLabel('achromatic-doublet')).toBe('Achromatic doublet');
		expect(kindLabel('plano-convex')).toBe('Plano-convex');
		expect(kindLabel('no-such-kind')).toBe('no-such-kind');
	});

	it('lists every glass of a prescription in the order light meets them, air left out', () => {
		expect(glassesOf([{ material: '517642' }, { material: '620364' }, { material: null }])).toBe('517642 + 620364');
		// An air-spaced pair of the same glass names it twice: two pieces of glass.
		expect(glassesOf([{ material: 'n-bk7' }, { material: null }, { material: 'n-bk7' }, {}])).toBe('n-bk7 + n-bk7');
		expect(glassesOf([])).toBe('');
	});
});

describe('pages write dates and headers one way (issue 16)', async () => {
	const { readdirSync, readFileSync, statSync } = await import('node:fs');
	const { join } = await import('node:path');
	const walk = (dir: string): string[] =>
		readdirSync(dir).flatMap((f) => {
			const p = join(dir, f);
			return statSync(p).isDirectory() ? walk(p) : p.endsWith('.svelte') ? [p] : [];
		});
	const pages = walk('src').map((p) => ({ p, text: readFileSync(p, 'utf8') }));

	it('formats every shown date with formatDate/formatDateTime, never an ISO slice or a "UTC" suffix', () => {
		const bad = pages.flatMap(({ p, text }) =>
			text
				.split('\n')
				.map((line, i) => ({ line, i }))
				// an ISO slice in markup, or "UTC" written as text (the date inputs' default value may slice)
				.filter(({ line }) => /\{[^}]*\.slice\(0, 1[06]\)[^}]*\}|\bUTC\{|\} UTC\b/.test(line) && !/value=|const /.test(line))
				.map(({ i }) => `${p}:${i + 1}`)
		);
		expect(bad).toEqual([]);
	});

	it('keeps table headers in the case they are written ("λ (nm)", not "Λ (NM)")', () => {
		const css = readFileSync('src/app.css', 'utf8');
		const th = css.slice(css.indexOf('.data-table th'), css.indexOf('}', css.indexOf('.data-table th')));
		expect(th).not.toMatch(/uppercase/);
		for (const { p, text } of pages) {
			for (const m of text.matchAll(/<th[^>]*>[\s\S]*?<\/th>/g)) expect(m[0], p).not.toMatch(/\buppercase\b/);
		}
	});
});

describe('stock by condition in one wording (issue 16)', () => {
	it('names usable always and the other conditions when there are any', () => {
		expect(stockWords({ usable: 3, quarantine: 1 })).toBe('3 usable · 1 in quarantine');
		expect(stockWords({ usable: 0, quarantine: 1, damaged: 2 })).toBe('0 usable · 1 in quarantine · 2 damaged');
		expect(stockWords({ usable: 4 })).toBe('4 usable');
	});
});
