/**
 * Bench words: which way round a part goes, in words a technician can check by eye on the part in
 * hand (flat / convex / concave outer faces, the more strongly curved one), never a surface number.
 * Sign convention: R > 0 when the centre of curvature lies after the surface, in the direction the
 * light travels (Hecht, Optics, 5th ed. 2017, §5.2, sign convention; from memory), so a first face
 * with R > 0 and a last face with R < 0 bulge outwards (convex). Which face counts as visibly more
 * strongly curved (≥ 25 % more curvature) is common practice, no source.
 */
import { describe, expect, it } from 'vitest';
import { orientationOf, orientationParts, orientationText } from '../../../src/lib/solver/orientation';

/** A part's surfaces turned round (light meets the last catalogue surface first, radii negated). */
const turned = (s: { radiusMm: number | null }[]) => s.map((x) => ({ radiusMm: x.radiusMm === null ? null : -x.radiusMm })).reverse();

describe('bench words', () => {
	it('a cemented doublet: the more strongly curved outer face, never "surface 3"', () => {
		// An achromat: crown face R 61.5 (convex), cemented face R −44.2, flint face R −128.9 (convex, flatter).
		const doublet = [{ radiusMm: 61.5 }, { radiusMm: -44.2 }, { radiusMm: -128.9 }];
		const a = orientationParts({ reversed: false, surfaces: doublet });
		const b = orientationParts({ reversed: true, surfaces: turned(doublet) });
		expect(a.way).toBe('more strongly curved face toward the object, flatter face toward the image (both convex)');
		expect(b.way).toBe('flatter face toward the object, more strongly curved face toward the image (both convex)');
		expect(a.sides).toBe('as in the catalogue listing; R 61.5 mm face toward the object, R 128.9 mm face toward the image');
		expect(b.sides).toBe('turned round from the catalogue listing; R 128.9 mm face toward the object, R 61.5 mm face toward the image');
		// The results table's short form: only a part turned round says so; the radii stay on the setup page.
		expect(a.brief).toBeNull();
		expect(b.brief).toBe('turned round from the catalogue listing');
		expect(b.sides?.startsWith(`${b.brief}; `)).toBe(true);
		for (const w of [orientationText({ reversed: false, surfaces: doublet }), orientationText({ reversed: true, surfaces: turned(doublet) })]) {
			expect(w).not.toMatch(/surface \d/);
		}
	});

	it('a doublet with a flat or concave outer face says so', () => {
		const flatBack = [{ radiusMm: 60 }, { radiusMm: -45 }, { radiusMm: null }];
		expect(orientationParts({ reversed: false, surfaces: flatBack }).way).toBe('curved (convex) face toward the object, flat face toward the image');
		expect(orientationParts({ reversed: true, surfaces: turned(flatBack) }).way).toBe('flat face toward the object, curved (convex) face toward the image');
		// A negative doublet with a concave first face and a convex last face.
		const negative = [{ radiusMm: -40 }, { radiusMm: 30 }, { radiusMm: -200 }];
		expect(orientationParts({ reversed: false, surfaces: negative }).way).toBe('concave face toward the object, convex face toward the image');
	});

	it('a doublet whose outer faces look alike: go by the datasheet marking, the face named by its radius', () => {
		const alike = [{ radiusMm: 100 }, { radiusMm: -60 }, { radiusMm: -110 }];
		const w = orientationParts({ reversed: false, surfaces: alike }).way;
		expect(w).toBe('both outer faces convex and nearly alike: go by the datasheet marking; the R 100 mm face toward the object');
	});

	it('plano, meniscus and biconvex parts with unequal radii', () => {
		expect(orientationParts({ reversed: false, surfaces: [{ radiusMm: 51.5 }, { radiusMm: null }] }).way).toBe('curved (convex) face toward the object, flat face toward the image');
		expect(orientationParts({ reversed: true, surfaces: [{ radiusMm: null }, { radiusMm: -51.5 }] }).way).toBe('flat face toward the object, curved (convex) face toward the image');
		// Plano-concave.
		expect(orientationParts({ reversed: false, surfaces: [{ radiusMm: -25.8 }, { radiusMm: null }] }).way).toBe('curved (concave) face toward the object, flat face toward the image');
		// Positive meniscus R 40 / 100: convex face first, concave face last; turned round the other way.
		const meniscus = [{ radiusMm: 40 }, { radiusMm: 100 }];
		expect(orientationParts({ reversed: false, surfaces: meniscus }).way).toBe('convex face toward the object, concave face toward the image');
		expect(orientationParts({ reversed: true, surfaces: turned(meniscus) }).way).toBe('concave face toward the object, convex face toward the image');
		// Biconvex R 50 / −150 ("best form"-like): the stronger face first.
		expect(orientationParts({ reversed: false, surfaces: [{ radiusMm: 50 }, { radiusMm: -150 }] }).way).toBe(
			'more strongly curved face toward the object, flatter face toward the image (both convex)'
		);
		// Biconcave R −30 / 90.
		expect(orientationParts({ reversed: false, surfaces: [{ radiusMm: -90 }, { radiusMm: 30 }] }).way).toBe(
			'flatter face toward the object, more strongly curved face toward the image (both concave)'
		);
	});

	it('symmetric parts, black boxes and windows', () => {
		expect(orientationText({ reversed: false, symmetric: true, surfaces: [{ radiusMm: 100 }, { radiusMm: -100 }] })).toBe('either way round (symmetric part: both faces alike)');
		expect(orientationParts({ reversed: true, surfaces: null }).way).toBe("datasheet's back face (as marked) toward the object");
		expect(orientationParts({ reversed: true, surfaces: null }).brief).toBeNull();
		expect(orientationParts({ reversed: true, symmetric: true, surfaces: [{ radiusMm: 100 }, { radiusMm: -100 }] }).brief).toBeNull();
		expect(orientationParts({ reversed: false, surfaces: [{ radiusMm: null }, { radiusMm: null }, { radiusMm: null }] }).way).toMatch(/^both outer faces flat: go by the datasheet marking/);
		// Setups saved with the first words of a symmetric part.
		expect(orientationOf({ reversed: false, surfaces: [{ radiusMm: 100 }, { radiusMm: -100 }], orientation: 'either side (symmetric)' }).way).toMatch(/^either way round/);
	});

	it('beam and afocal questions name the incoming beam, never an object', () => {
		const pcx = [{ radiusMm: 51.5 }, { radiusMm: null }];
		for (const mode of ['beam', 'afocal'] as const) {
			const t = orientationText({ reversed: false, surfaces: pcx }, mode);
			expect(t).toBe('curved (convex) face toward the incoming beam, flat face toward the outgoing beam; as in the catalogue listing; R 51.5 mm face toward the incoming beam, flat face toward the outgoing beam');
			expect(t).not.toMatch(/object|image/);
			expect(orientationParts({ reversed: true, surfaces: null }, mode).way).toBe("datasheet's back face (as marked) toward the incoming beam");
		}
	});
});
