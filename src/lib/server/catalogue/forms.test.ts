import { describe, expect, it } from 'vitest';
import { toNumber } from './forms';

describe('toNumber (form fields)', () => {
	it('reads decimal notation, with a decimal comma', () => {
		expect(toNumber('12')).toBe(12);
		expect(toNumber(' -2.5 ')).toBe(-2.5);
		expect(toNumber('2,5')).toBe(2.5);
		expect(toNumber('1e3')).toBe(1000);
		expect(toNumber('')).toBeNull();
	});
	it.each(['0x10', '0b11', '0o7', 'Infinity', '1e999', 'NaN', '12abc', '1 2'])('passes %j on as text, so zod names the field', (v) => {
		expect(toNumber(v)).toBe(v);
	});
});
