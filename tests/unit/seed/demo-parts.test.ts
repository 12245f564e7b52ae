/**
 * The invented demo catalogue is consistent with itself: every part with a prescription has, at the
 * d line, the focal length its name says (a lab would notice "f = 50 mm" computing to 45 mm), and
 * SKUs are unique. The EFL comes from the catalogue's own computation (thick lens by ray transfer
 * matrices, glass codes by their nd), so this checks the seed's design, not the optics core.
 */
import { describe, expect, it } from 'vitest';
import { binCode, demoParts, drawerFor } from '../../../seed/demo-data';
import { computeDerived, toSurfaceSpecs } from '../../../src/lib/server/catalogue/derived';

describe('the demo catalogue', () => {
	const parts = demoParts();

	it('has unique SKUs', () => {
		expect(new Set(parts.map((p) => p.sku)).size).toBe(parts.length);
	});

	it('names parts by our own bin codes and coating bands, no supplier scheme (issue 16)', () => {
		for (const p of parts) {
			// TW-<drawer>-<slot>: the drawer the seed puts the part in, the slot counted within it
			expect(p.sku).toBe(binCode(drawerFor(p), Number(p.sku.slice(-2))));
			expect(p.sku).not.toMatch(/\d{3}$|ASPH|-N\d/);
		}
		const coatings = new Set(parts.map((p) => p.coating));
		expect(coatings.has('AR 650-1050 nm') || coatings.has('AR 1050-1700 nm')).toBe(false);
		for (const c of coatings) expect(c).toMatch(/^(uncoated|AR \d+–\d+ nm \(.+\))$/);
	});

	it('gives every part with a prescription the focal length of its name at the d line, within 0.5 %', () => {
		const off: string[] = [];
		let checked = 0;
		for (const p of parts) {
			if (p.surfaces.length < 2) continue;
			const named = /f = (-?\d+(?:\.\d+)?) mm/.exec(p.name);
			expect(named, p.name).not.toBeNull();
			const r = computeDerived(
				{
					surfaces: toSurfaceSpecs(p.surfaces.map((s) => ({ radiusMm: s.radiusMm, thicknessMm: s.thicknessMm, material: s.materialCode }))),
					eflMm: null,
					bflMm: null,
					centerThicknessMm: null,
					designWavelengthNm: 587.6,
					diameterMm: p.diameterMm,
					clearApertureMm: null,
					primaryMaterial: null
				},
				587.6
			);
			expect(r.ok, p.sku).toBe(true);
			if (!r.ok) continue;
			checked++;
			const f = Number(named![1]);
			if (Math.abs(r.value.eflMm / f - 1) > 0.005) off.push(`${p.sku}: named ${f} mm, computed ${r.value.eflMm.toFixed(2)} mm`);
		}
		expect(checked).toBeGreaterThan(80);
		expect(off).toEqual([]);
	});
});
