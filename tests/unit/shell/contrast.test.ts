import { describe, expect, it } from 'vitest';
import config from '../../../tailwind.config';

// Contrast ratio and relative luminance as defined by W3C, Web Content Accessibility Guidelines (WCAG) 2.1,
// 2018, section 1.4.3 "Contrast (Minimum)" and the glossary entries "contrast ratio" and "relative luminance"
// (sRGB channels linearised with the 0.03928 threshold; ratio (L1 + 0.05) / (L2 + 0.05)).
function luminance(hex: string): number {
	const [r, g, b] = [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16) / 255).map((c) => (c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4));
	return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}
function contrast(a: string, b: string): number {
	const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
	return (hi + 0.05) / (lo + 0.05);
}

const colors = config.theme.extend.colors;

describe('grey text on our backgrounds reaches WCAG AA for small text (4.5:1)', () => {
	it('checks the formula against the two known end points', () => {
		expect(contrast('#000000', '#ffffff')).toBeCloseTo(21, 10);
		expect(contrast('#777777', '#777777')).toBe(1);
	});

	for (const shade of [400, 500, 600] as const) {
		for (const [bg, hex] of [
			['paper', colors.paper.DEFAULT],
			['paper-50', colors.paper[50]],
			['white', '#ffffff'],
			['ink-50', colors.ink[50]]
		] as const) {
			it(`ink-${shade} on ${bg}`, () => {
				expect(contrast(colors.ink[shade], hex)).toBeGreaterThanOrEqual(4.5);
			});
		}
	}
});
