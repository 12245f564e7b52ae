/** The /build form's track tolerance: read from the URL, validated with the field named, default 0 (none). */
import { describe, expect, it } from 'vitest';
import { readForm } from '../../../src/lib/server/solver/form';
import { formFieldOf, IMAGING_DEFAULTS } from '../../../src/lib/solver/form-fields';

const ask = (extra: Record<string, string>) => readForm(new URLSearchParams({ track: '400 mm', magnification: '-1', na: '0.02', ...extra }));

describe('track tolerance on the form', () => {
	it('reads a length with units, and blank or absent means none', () => {
		expect(ask({ trackTolerance: '2 mm' }).request?.trackToleranceMm).toBe(2);
		expect(ask({ trackTolerance: '0.5 cm' }).request?.trackToleranceMm).toBe(5);
		expect(ask({ trackTolerance: '' }).request?.trackToleranceMm).toBe(0);
		expect(ask({}).request?.trackToleranceMm).toBe(0);
		expect(IMAGING_DEFAULTS.trackTolerance).toBe('0 mm');
	});

	it('names the field when it does not parse or is as long as the track', () => {
		expect(ask({ trackTolerance: 'some' }).errors.trackTolerance).toMatch(/Track tolerance: enter a length/);
		expect(ask({ trackTolerance: '400 mm' }).errors.trackTolerance).toMatch(/shorter than the track/);
		expect(ask({ trackTolerance: '-1 mm' }).errors.trackTolerance).toBeDefined();
		expect(formFieldOf('imaging', 'trackToleranceMm')).toBe('trackTolerance');
	});
});
