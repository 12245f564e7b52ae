import { describe, expect, it } from 'vitest';
import Papa from 'papaparse';
import { formatPrice, parsePrice, parseOrderCsv, toOrderCsv, ORDER_CSV_COLUMNS, type OrderLine } from '$lib/server/purchasing/csv';

const line = (over: Partial<OrderLine>): OrderLine => ({
	sku: 'TW-PCX-025-050',
	name: 'Plano-convex 25 mm, f 50',
	supplier: 'Harrowgate Optical Works',
	supplierPartNumber: 'HOW-5521',
	quantity: 4,
	unitPrice: 38.5,
	currency: 'EUR',
	leadTimeDays: 14,
	onHand: 1,
	available: 0,
	reorderPoint: 2,
	...over
});

describe('order CSV', () => {
	const lines = [
		line({}),
		line({ sku: 'TW-X', name: 'Comma, "quotes" and\na line break', supplier: null, supplierPartNumber: null, unitPrice: null, leadTimeDays: null }),
		line({ sku: 'TW-F', name: '=HYPERLINK("http://x","y")', supplier: '+cmd', supplierPartNumber: '-12', unitPrice: 0.05, quantity: 100000 }),
		line({ sku: 'TW-U', name: 'Linse Ø 12,7 mm · Brennweite 30', supplier: '@home', unitPrice: 1, currency: 'CHF' }),
		line({ sku: 'TW-T', name: '\tTabbed', supplierPartNumber: '\rcarriage' })
	];

	it('round-trips exactly', () => {
		const text = toOrderCsv(lines);
		expect(parseOrderCsv(text)).toEqual(lines);
		// with the BOM the download carries
		expect(parseOrderCsv('\ufeff' + text)).toEqual(lines);
	});

	it('uses the documented header and neutralises formula cells (SECURITY.md V5)', () => {
		const text = toOrderCsv(lines);
		const raw = Papa.parse<string[]>(text).data;
		expect(raw[0]).toEqual([...ORDER_CSV_COLUMNS]);
		expect(raw[3][1]).toBe(`'=HYPERLINK("http://x","y")`);
		expect(raw[3][2]).toBe("'+cmd");
		expect(raw[3][3]).toBe("'-12");
		expect(raw[4][2]).toBe("'@home");
		expect(raw[5][1]).toBe("'\tTabbed");
		for (const row of raw.slice(1)) for (const cell of row) expect(cell).not.toMatch(/^[=+\-@\t\r]/);
	});

	it('writes prices in major units', () => {
		expect(formatPrice(38.5)).toBe('38.50');
		expect(formatPrice(0.05)).toBe('0.05');
		expect(formatPrice(null)).toBe('');
		expect(parsePrice('38.5')).toBe(38.5);
		expect(parsePrice('0.05')).toBe(0.05);
		expect(parsePrice('')).toBeNull();
		expect(() => parsePrice('1e3')).toThrow();
		expect(() => parsePrice('1.005')).toThrow();
	});
});
