/**
 * The stocks of the regression examples (invented parts, described by their prescriptions only):
 * the two-part relay at 632.8 nm whose marginal ray used to run backwards at 47 mm on a 31 mm part,
 * and the demo catalogue (seed/demo-data.ts) as solver parts, all in stock.
 */
import type { CandidatePart } from '../../../src/lib/server/solver/elements';
import { demoParts } from '../../../seed/demo-data';
import type { SurfaceSpec } from '../../../src/lib/optics';

function part(id: number, kind: string, diameterMm: number, surfaces: SurfaceSpec[]): CandidatePart {
	return {
		partId: id,
		sku: `EX-${id}`,
		name: `Example ${kind} ${id}`,
		kind,
		diameterMm,
		clearApertureMm: null,
		surfaces,
		eflMm: null,
		bflMm: null,
		centerThicknessMm: null,
		designWavelengthNm: 587.6,
		measured: null,
		onHand: 2,
		available: 2,
		locations: [{ locationId: 1, code: 'T1', name: 'Test drawer', quantity: 2 }]
	};
}

/** Plano-convex R2 −207.6 mm, t 2.65 mm, Ø 31 mm, glass 517642; biconvex R 181 / −330.3 mm, t 8.49 mm, Ø 44.3 mm, glass 785257. */
export function relayParts(): CandidatePart[] {
	return [
		part(1, 'plano-convex', 31, [{ radiusMm: null, thicknessMm: 2.65, material: '517642' }, { radiusMm: -207.6 }]),
		part(2, 'biconvex', 44.3, [{ radiusMm: 181, thicknessMm: 8.49, material: '785257' }, { radiusMm: -330.3 }])
	];
}

/** The question of that example: 632.8 nm, track 1017 mm, m −0.351, NA 0.1, object height 3 mm. */
export const RELAY_QUESTION = { wavelengthNm: 632.8, trackMm: 1017, magnification: -0.351, objectNA: 0.1, objectHeightMm: 3, minGapMm: 0, minWorkingDistanceMm: 0, limit: 50 };

/** The demo catalogue as solver parts, three units each. */
export function demoStock(): CandidatePart[] {
	return demoParts().map((p, k) => ({
		partId: k + 1,
		sku: p.sku,
		name: p.name,
		kind: p.kind,
		diameterMm: p.diameterMm,
		clearApertureMm: null,
		surfaces: p.surfaces.map((s) => (s.thicknessMm === undefined ? { radiusMm: s.radiusMm } : { radiusMm: s.radiusMm, thicknessMm: s.thicknessMm, material: s.materialCode ?? null })),
		eflMm: p.eflMm,
		bflMm: p.bflMm,
		centerThicknessMm: p.centerThicknessMm,
		designWavelengthNm: p.designWavelengthNm,
		measured: null,
		onHand: 3,
		available: 3,
		locations: [{ locationId: 1, code: 'T1', name: 'Test drawer', quantity: 3 }]
	}));
}
