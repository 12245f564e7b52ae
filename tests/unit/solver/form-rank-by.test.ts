/** The /build form's "Rank by the spot" choice reaches the request (a rule of this product). */
import { describe, expect, it } from 'vitest';
import { readForm } from '$lib/server/solver/form';

const question = 'objectHeight=2&track=300&magnification=-0.5&na=0.05&wavelength=587.6&minGap=1&minWd=5&available=true&maxParts=2';

describe('rank by on the /build form', () => {
	it('defaults to the working wavelength and takes the colour band when chosen', () => {
		expect(readForm(new URLSearchParams(question)).request!.rankBy).toBe('monochromatic');
		expect(readForm(new URLSearchParams(`${question}&rankBy=band`)).request!.rankBy).toBe('band');
		// Anything else is the default, never an error on a select the page itself renders.
		expect(readForm(new URLSearchParams(`${question}&rankBy=colour`)).request!.rankBy).toBe('monochromatic');
	});
});
