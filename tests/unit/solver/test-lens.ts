/**
 * Invented singlets for the solver's unit tests: `lensMaker` gives a `lens(r1, r2, ct, diameterMm, available, material)`
 * that numbers its parts from `firstId` (SKU `<prefix>-<id>`), all in one test drawer.
 */
import type { CandidatePart } from '../../../src/lib/server/solver/elements';
import type { StockView } from '../../../src/lib/server/solver/solve';

export interface LensMakerOptions {
	firstId: number;
	prefix: string;
	name: string;
	kind?: CandidatePart['kind'];
	available?: number;
	drawer?: { code: string; name: string };
}

export function lensMaker(o: LensMakerOptions) {
	let nextId = o.firstId;
	const drawer = o.drawer ?? { code: 'T1', name: 'Test drawer' };
	/** A singlet R1, R2 (mm; null = flat), centre thickness ct, in stock. */
	const lens = (r1: number | null, r2: number | null, ct: number, diameterMm = 25.4, available = o.available ?? 3, material = '517642'): CandidatePart => {
		const id = nextId++;
		return {
			partId: id,
			sku: `${o.prefix}-${id}`,
			name: `${o.name} ${id}`,
			kind: o.kind ?? 'other',
			diameterMm,
			clearApertureMm: null,
			surfaces: [{ radiusMm: r1, thicknessMm: ct, material }, { radiusMm: r2 }],
			eflMm: null,
			bflMm: null,
			centerThicknessMm: ct,
			designWavelengthNm: 587.6,
			measured: null,
			onHand: available,
			available,
			locations: [{ locationId: 1, code: drawer.code, name: drawer.name, quantity: available }]
		};
	};
	/** A stock view of `parts` under a key of its own (the solver caches snapshots by key). */
	const stockOf = (parts: CandidatePart[]): StockView => ({ key: `${o.prefix}-${nextId}-${Math.random()}`, parts });
	return { lens, stockOf };
}
