import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { badTextReason, dateInput, parseIsoDate, text } from './input';

describe('text()', () => {
	const schema = z.object({ name: text().trim().min(1).max(20) });
	it('keeps ordinary text, tabs, new lines and paired surrogates (emoji)', () => {
		expect(schema.parse({ name: ' Plano\tconvex\n🔭 ' }).name).toBe('Plano\tconvex\n🔭');
	});
	it.each([
		['NUL', 'a\u0000b'],
		['bell', 'a\u0007'],
		['lone high surrogate', '\ud800'],
		['lone low surrogate', 'x\udc00y'],
		['high surrogate before a letter', '\ud83dA']
	])('refuses %s, naming the field', (_, name) => {
		const r = schema.safeParse({ name });
		expect(r.success).toBe(false);
		expect(r.error!.issues[0].path).toEqual(['name']);
	});
	it('badTextReason says which kind of character', () => {
		expect(badTextReason('\ud800')).toMatch(/surrogate/);
		expect(badTextReason('\u0000')).toMatch(/control/);
		expect(badTextReason('ok')).toBeNull();
	});
});

describe('dateInput()', () => {
	const d = dateInput();
	it('accepts real dates and date-times', () => {
		expect(d.parse('2026-03-01').toISOString()).toBe('2026-03-01T00:00:00.000Z');
		expect(d.parse('2028-02-29T12:30:00Z').toISOString()).toBe('2028-02-29T12:30:00.000Z');
		expect(d.parse('2026-03-01T10:00:00+02:00').toISOString()).toBe('2026-03-01T08:00:00.000Z');
		expect(d.parse(new Date('2026-01-02T00:00:00Z')).toISOString()).toBe('2026-01-02T00:00:00.000Z');
	});
	it.each(['2026-02-30', '2027-02-29', '2026-13-01', '2026-04-31T10:00:00Z', '-000001-01-01', '0000-01-01', '10000-01-01', '2026-03-01T24:00:00Z', 'tomorrow', '', '1e3'])(
		'refuses %j',
		(v) => {
			expect(d.safeParse(v).success).toBe(false);
		}
	);
	it('refuses null, numbers and invalid Date objects instead of coercing them (null was stored as 1970)', () => {
		for (const v of [null, 0, 1767225600000, true, new Date('nope')]) expect(d.safeParse(v).success).toBe(false);
	});
	it('parseIsoDate keeps a date without a time at midnight UTC', () => {
		expect(parseIsoDate('2026-12-31')?.toISOString()).toBe('2026-12-31T00:00:00.000Z');
		expect(parseIsoDate('2026-02-30')).toBeNull();
	});
});
