/**
 * The catalogue's text query reads word by word (issue 16): numbers are lengths, the rest is text.
 * The matching itself runs in SQL and is tested on the demo data in tests/integration/catalogue/search.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { codePrefilter, textTerms } from '../../../src/lib/server/catalogue/list';

describe('textTerms', () => {
	it('splits at spaces and reads lengths as numbers, with or without sign, unit or prefix', () => {
		expect(textTerms('doublet 100')).toEqual([
			{ number: null, text: 'doublet' },
			{ number: 100, signed: false, text: '100' }
		]);
		expect(textTerms('100mm Doublet').map((t) => t.number ?? t.text)).toEqual([100, 'doublet']);
		expect(textTerms('f = -50 mm concave').map((t) => t.number ?? t.text)).toEqual([-50, 'concave']);
		expect(textTerms('-50')[0]).toMatchObject({ number: -50, signed: true });
		expect(textTerms('Ø25.4 f=100').map((t) => t.number)).toEqual([25.4, 100]);
	});

	it('keeps codes with letters as text', () => {
		expect(textTerms('TW-A1D2-04')).toEqual([{ number: null, text: 'tw-a1d2-04' }]);
		expect(textTerms('caf2')).toEqual([{ number: null, text: 'caf2' }]);
	});

	it('drops words that mean nothing alone and caps the word count', () => {
		expect(textTerms(' f = mm ')).toEqual([]);
		expect(textTerms('a b c d e f g h i j k').length).toBe(8);
	});
});

describe('codePrefilter (FULLTEXT terms for a SKU prefix)', () => {
	it('uses the pieces after the first, of indexable length, not stopword prefixes', () => {
		expect(codePrefilter('BK-0420')).toBe('+0420*');
		expect(codePrefilter('tw-a1d2-04')).toBe('+a1d2*'); // "04" is shorter than the index keeps
		expect(codePrefilter('TW-A1')).toBeNull();
		expect(codePrefilter('KM-wit-123')).toBe('+123*'); // "wit" begins the stopword "with"
	});
});
