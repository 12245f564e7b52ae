import { describe, expect, it } from 'vitest';
import { hasDecimals, priceUnitUnknown, suggestMapping, suggestPriceUnit, MM_PER } from '$lib/server/imports/fields';
import { compileMapping, parseNumberCell, readRow, fieldOfPath } from '$lib/server/imports/rows';
import { partsHeader } from '$lib/server/imports/export';

describe('mapping suggestions', () => {
	it('maps a header that uses the export names one to one', () => {
		const header = partsHeader(3);
		const { mapping } = suggestMapping(header);
		for (const f of ['sku', 'name', 'kind', 'diameterMm', 'r1Mm', 't2Mm', 'material2', 'r3Mm', 'unitPrice']) expect(mapping[f]).toBe(f);
		expect(mapping.id).toBeUndefined();
		expect(Object.values(mapping)).not.toContain('onHand');
	});

	it('suggests fields and units from a supplier header', () => {
		const s = suggestMapping(['Part No.', 'Description', 'Dia (in)', 'Focal length [mm]', 'R1', 'CT', 'Glass', 'Price']);
		expect(s.mapping).toMatchObject({
			supplierPartNumber: 'Part No.',
			name: 'Description',
			diameterMm: 'Dia (in)',
			eflMm: 'Focal length [mm]',
			r1Mm: 'R1',
			centerThicknessMm: 'CT',
			material1: 'Glass',
			unitPrice: 'Price'
		});
		expect(s.units).toMatchObject({ diameterMm: 'in', eflMm: 'mm' });
		// "Price" names no unit: the values decide (see service.resolvePriceUnit)
		expect(s.units.unitPrice).toBeUndefined();
	});

	it('takes the price unit from the header when it states one (issue 16)', () => {
		expect(suggestMapping(['sku', 'unitPrice']).units.unitPrice).toBe('major'); // our own name: currency units
		expect(suggestMapping(['sku', 'unitPriceMinor']).units.unitPrice).toBe('minor');
		expect(suggestMapping(['sku', 'Price (cents)']).units.unitPrice).toBe('minor');
		expect(suggestMapping(['sku', 'Price (EUR)']).units.unitPrice).toBe('major');
		expect(suggestMapping(['sku', 'Preis €']).mapping.unitPrice).toBeUndefined(); // not a known name; mapped by hand
		expect(suggestPriceUnit('Preis €')).toBe('major');
		expect(suggestPriceUnit('Price')).toBeNull();
		expect(hasDecimals('38.00')).toBe(true);
		expect(hasDecimals('29,50')).toBe(true);
		expect(hasDecimals('3800')).toBe(false);
		expect(priceUnitUnknown('Price', ['3800', '45'])).toMatch(/cannot tell whether 3800 means 3800.00 or 38.00/);
	});

	it('prefers the mapping saved for the supplier where its columns still exist', () => {
		const s = suggestMapping(['Ref', 'Label', 'D'], { mapping: { supplierPartNumber: 'Ref', name: 'Label', diameterMm: 'D', eflMm: 'Gone' }, units: { diameterMm: 'in' } });
		expect(s.mapping).toEqual({ supplierPartNumber: 'Ref', name: 'Label', diameterMm: 'D' });
		expect(s.units).toEqual({ diameterMm: 'in' });
	});
});

describe('cells', () => {
	it('converts inches with the mathjs factor (25.4 mm exactly, NIST SP 811 (2008), B.8)', () => {
		expect(MM_PER.in).toBe(25.4);
		expect(parseNumberCell('2', 'diameterMm', 'in', ',')).toBeCloseTo(50.8, 12);
		expect(parseNumberCell('1 in', 'diameterMm', 'mm', ',')).toBeCloseTo(25.4, 12);
		expect(parseNumberCell('2.5 cm', 'r1Mm', 'mm', ',')).toBeCloseTo(25, 12);
		expect(parseNumberCell('25,4', 'diameterMm', 'mm', ';')).toBeCloseTo(25.4, 12);
		expect(parseNumberCell('25,4', 'diameterMm', 'mm', ',')).toBe('Not a number.');
		expect(parseNumberCell('abc', 'diameterMm', 'mm', ',')).toMatch(/Not a number/);
		expect(parseNumberCell('import(x)', 'diameterMm', 'mm', ',')).toMatch(/Not a number/);
		expect(parseNumberCell('12.50', 'unitPrice', 'major', ',')).toBe(12.5);
		expect(parseNumberCell('5 mm', 'leadTimeDays', undefined, ',')).toMatch(/plain number/);
	});

	it('reads prices in the unit of the column: currency units as they are, cents divided (issue 16)', () => {
		expect(parseNumberCell('38.00', 'unitPrice', 'major', ',')).toBe(38);
		expect(parseNumberCell('38', 'unitPrice', 'major', ',')).toBe(38);
		expect(parseNumberCell('29,50', 'unitPrice', 'major', ';')).toBe(29.5);
		expect(parseNumberCell('38.005', 'unitPrice', 'major', ',')).toMatch(/two decimals/);
		expect(parseNumberCell('3800', 'unitPrice', 'minor', ',')).toBe(38);
		expect(parseNumberCell('29.50', 'unitPrice', 'minor', ',')).toMatch(/Not whole cents/);
		expect(parseNumberCell('38', 'unitPrice', undefined, ',')).toMatch(/unit of the price column is not known/);
	});

	it('reads a row into part input with surfaces and strips the formula prefix', () => {
		const header = ['sku', 'name', 'kind', 'diameterMm', 'r1Mm', 't1Mm', 'material1', 'r2Mm', 't2Mm', 'material2', 'r3Mm', 'coating'];
		const cm = compileMapping(header, Object.fromEntries(header.map((h) => [h, h])), {}, ',');
		const r = readRow(['X-1', "'=evil()", 'PCX', '25.4', '51.7', '4', '517642', '', '', '', '', ''], cm);
		expect(r.errors).toEqual([]);
		expect(r.input).toMatchObject({ sku: 'X-1', name: '=evil()', kind: 'plano-convex', diameterMm: 25.4, coating: null });
		expect(r.input.surfaces).toEqual([{ radiusMm: 51.7, thicknessMm: 4, material: '517642' }, { radiusMm: null }]);
	});

	it('reports a non-numeric dimension as a cell error', () => {
		const cm = compileMapping(['sku', 'diameterMm'], { sku: 'sku', diameterMm: 'diameterMm' }, {}, ',');
		expect(readRow(['X', 'wide'], cm).errors).toEqual([{ field: 'diameterMm', value: 'wide', message: expect.stringMatching(/Not a number/) }]);
	});

	it('names surface issues by their CSV column', () => {
		expect(fieldOfPath(['surfaces', 1, 'radiusMm'])).toBe('r2Mm');
		expect(fieldOfPath(['surfaces', 0, 'material'])).toBe('material1');
		expect(fieldOfPath(['diameterMm'])).toBe('diameterMm');
	});
});
