/**
 * Coatings and left-out parts in Build from stock, on small invented stocks: an answer that uses a part
 * outside its coating band carries a warning with the word "coating" and ranks after every in-band answer
 * (imaging: within its vignetting class; beam and afocal: after all in-band answers); `inCoatingBandOnly`
 * leaves such parts out and says so in `stats.partsExcluded`; parts without an index at the wavelength
 * (glass codes above 1100 nm) are listed there with their reason and count, in every mode.
 */
import { describe, expect, it } from 'vitest';
import { solveWithStock, type StockView } from '../../../src/lib/server/solver/solve';
import { solveBeamWithStock, solveAfocalWithStock } from '../../../src/lib/server/solver/beam-solve';
import { solveRequestSchema, type ParsedAfocalRequest, type ParsedBeamRequest, type ParsedImagingRequest } from '../../../src/lib/solver/request';
import type { CandidatePart } from '../../../src/lib/server/solver/elements';
import { compareKeys, rankKey } from '../../../src/lib/solver/ranking';
import { groupExcluded } from '../../../src/lib/server/solver/exclusions';
import { buildElement, cardinalPoints } from '../../../src/lib/optics';

let nextId = 1;
function lens(r1: number | null, r2: number | null, ct: number, opts: { diameterMm?: number; material?: string; coating?: string | null; band?: [number, number] | null } = {}): CandidatePart {
	const id = nextId++;
	return {
		partId: id,
		sku: `C-${id}`,
		name: `Coating test lens ${id}`,
		kind: 'other',
		diameterMm: opts.diameterMm ?? 25.4,
		clearApertureMm: null,
		surfaces: [{ radiusMm: r1, thicknessMm: ct, material: opts.material ?? '517642' }, { radiusMm: r2 }],
		eflMm: null,
		bflMm: null,
		centerThicknessMm: ct,
		designWavelengthNm: 587.6,
		measured: null,
		onHand: 3,
		available: 3,
		locations: [{ locationId: 1, code: 'T1', name: 'Test drawer', quantity: 3 }],
		coating: opts.coating ?? null,
		coatingBandNm: opts.band ? { minNm: opts.band[0], maxNm: opts.band[1] } : null
	};
}
const stockOf = (parts: CandidatePart[]): StockView => ({ key: `coating-test-${nextId}-${Math.random()}`, parts });
const imaging = (q: Record<string, unknown>) => solveRequestSchema.parse({ wavelengthNm: 587.6, objectNA: 0.02, minGapMm: 0.5, minWorkingDistanceMm: 2, limit: 50, ...q }) as ParsedImagingRequest;
const usesOut = (s: { warnings?: { code: string }[] }) => (s.warnings ?? []).some((w) => w.code === 'coating-out-of-band');

describe('coating band in imaging answers', () => {
	// A 1:1 relay at 587.6 nm: the best relay part (longer f, so longer working distances) is coated for the NIR.
	const nir = lens(206, -206, 4, { coating: 'AR 1050–1700 nm', band: [1050, 1700] });
	const vis = lens(103, -103, 4, { coating: 'AR 400–700 nm', band: [400, 700] });
	const plain = lens(155, -155, 4, { coating: 'uncoated', band: null });
	const stock = stockOf([nir, vis, plain]);

	/** The exact 1:1 track of a single part: 4f plus the principal planes' places and the thickness (Hecht, Optics, 2017, §6.2, from memory). */
	const oneToOneTrack = (p: CandidatePart) => {
		const built = buildElement(p.surfaces, 587.6);
		if (!built.ok) throw built.error;
		const cp = cardinalPoints(built.value.matrix)!;
		return 4 * cp.eflMm - cp.frontPrincipalMm + built.value.thicknessMm + cp.backPrincipalMm;
	};

	it('warns in words with "coating" and ranks after in-band answers of the same vignetting class', async () => {
		const r = await solveWithStock(stock, imaging({ trackMm: oneToOneTrack(nir), magnification: -1, maxElements: 2 }), { inline: true });
		expect(r.solutions.length).toBeGreaterThan(2);
		const out = r.solutions.filter(usesOut);
		expect(out.length).toBeGreaterThan(0);
		for (const s of out) {
			const w = s.warnings!.find((x) => x.partId === nir.partId)!;
			expect(w.message).toMatch(/coating band 1050–1700 nm/);
			expect(w.message).toContain('587.6 nm');
		}
		// Every answer without the NIR part has no warning.
		for (const s of r.solutions.filter((s) => !s.elements.some((e) => e.partId === nir.partId))) expect(usesOut(s)).toBe(false);
		for (let k = 1; k < r.solutions.length; k++) {
			const a = r.solutions[k - 1],
				b = r.solutions[k];
			expect(compareKeys(rankKey(a), rankKey(b))).toBeLessThanOrEqual(0);
			const vig = (s: typeof a) => (s.vignetting.axial ? 2 : s.vignetting.edge ? 1 : 0);
			if (vig(a) === vig(b)) expect(usesOut(a) && !usesOut(b)).toBe(false);
		}
		// Without the coating rule the NIR single part would rank first: its working distance is the longest.
		const nirSingle = r.solutions.find((s) => s.elements.length === 1 && s.elements[0].partId === nir.partId)!;
		const firstInBand = r.solutions.find((s) => !usesOut(s))!;
		expect(nirSingle).toBeDefined();
		const withoutCoating = (s: typeof nirSingle) => rankKey({ ...s, warnings: [] });
		expect(compareKeys(withoutCoating(nirSingle), withoutCoating(firstInBand))).toBeLessThan(0);
		expect(r.solutions.indexOf(nirSingle)).toBeGreaterThan(r.solutions.indexOf(firstInBand));
	});

	it('inCoatingBandOnly leaves the part out and says why in stats.partsExcluded', async () => {
		const r = await solveWithStock(stock, imaging({ trackMm: oneToOneTrack(nir), magnification: -1, inCoatingBandOnly: true }), { inline: true });
		expect(r.solutions.length).toBeGreaterThan(0);
		expect(r.solutions.some((s) => s.elements.some((e) => e.partId === nir.partId))).toBe(false);
		expect(r.stats.partsExcluded).toEqual([{ reason: 'coating band does not cover 587.6 nm (the question leaves such parts out)', count: 1, skus: [nir.sku] }]);
		expect(r.stats.partsConsidered).toBe(2);
	});
});

describe('parts without an index at the wavelength', () => {
	const glass = [lens(103, -103, 4), lens(51.7, null, 3.5), lens(155, -155, 4)];
	const silica = lens(92, -92, 4, { material: 'fused-silica' });
	const stock = stockOf([...glass, silica]);

	it('above 1100 nm the glass-code parts are listed with their reason and count; the fused silica part is used', async () => {
		const r = await solveWithStock(stock, imaging({ wavelengthNm: 1550, trackMm: 800, magnification: -1, maxElements: 1 }), { inline: true });
		expect(r.stats.partsExcluded).toEqual([{ reason: 'no refractive index at 1550 nm: glass codes are modelled 365–1100 nm', count: 3, skus: glass.map((p) => p.sku) }]);
		expect(r.stats.partsConsidered).toBe(1);
		expect(r.solutions.every((s) => s.elements.every((e) => e.partId === silica.partId))).toBe(true);
	});

	it('below 1100 nm nothing is left out', async () => {
		const r = await solveWithStock(stock, imaging({ trackMm: 420, magnification: -1 }), { inline: true });
		expect(r.stats.partsExcluded).toEqual([]);
	});

	it('beam and afocal questions list them too', async () => {
		const beam = solveRequestSchema.parse({ mode: 'beam', wavelengthNm: 1550, input: { waistDiameterMm: 2, waistPositionMm: 0 }, target: { waistDiameterMm: 0.1, waistPositionMm: 200 } }) as ParsedBeamRequest;
		const rb = await solveBeamWithStock(stock, beam, { inline: true });
		expect(rb.stats.partsExcluded).toEqual([{ reason: 'no refractive index at 1550 nm: glass codes are modelled 365–1100 nm', count: 3, skus: glass.map((p) => p.sku) }]);
		const afocal = solveRequestSchema.parse({ mode: 'afocal', wavelengthNm: 1550, expansion: 2, inputBeamDiameterMm: 1, maxLengthMm: 500 }) as ParsedAfocalRequest;
		const ra = await solveAfocalWithStock(stock, afocal, { inline: true });
		expect(ra.stats.partsExcluded.map((e) => [e.reason, e.count])).toEqual([['no refractive index at 1550 nm: glass codes are modelled 365–1100 nm', 3]]);
	});

	it('groups reasons, most parts first, with up to five SKUs', () => {
		const g = groupExcluded([
			...Array.from({ length: 7 }, (_, k) => ({ sku: `A${k}`, reason: 'a' })),
			{ sku: 'B0', reason: 'b' }
		]);
		expect(g).toEqual([
			{ reason: 'a', count: 7, skus: ['A0', 'A1', 'A2', 'A3', 'A4'] },
			{ reason: 'b', count: 1, skus: ['B0'] }
		]);
	});
});

describe('coating band in beam and afocal answers', () => {
	const band: [number, number] = [400, 700];
	const parts = [
		lens(25.8, null, 4, { coating: 'AR 400–700 nm', band }),
		lens(51.7, null, 3.5, { coating: 'AR 400–700 nm', band }),
		lens(103, -103, 3, { coating: 'V-coat 1064 nm', band: [1042.72, 1085.28] }),
		lens(null, -77.5, 3, { diameterMm: 50.8 }),
		lens(-25.8, null, 2, { diameterMm: 12.7, coating: 'AR 400–700 nm', band }),
		lens(-51.7, 51.7, 2),
		lens(30, 80, 4, { coating: 'AR 400–700 nm', band })
	];
	const stock = stockOf(parts);

	it('mode beam: in-band answers first (the exact best of the in-band parts), then those with a part outside its band', async () => {
		const q = solveRequestSchema.parse({
			mode: 'beam',
			wavelengthNm: 1064,
			input: { waistDiameterMm: 2, waistPositionMm: -100 },
			target: { waistDiameterMm: 0.04, waistPositionMm: 250 },
			minClearance: 1.2,
			minEfficiency: 0.5,
			limit: 50
		}) as ParsedBeamRequest;
		const r = await solveBeamWithStock(stock, q, { inline: true });
		const flags = r.solutions.map(usesOut);
		expect(flags.includes(true)).toBe(true);
		expect(flags.includes(false)).toBe(true);
		expect(flags.indexOf(true)).toBeGreaterThan(flags.lastIndexOf(false));
		for (const s of r.solutions.filter(usesOut)) expect(s.warnings!.map((w) => w.message).join(' ')).toContain('coating band 400–700 nm');
		// The in-band head equals a search of the in-band parts alone; the tail equals the whole search's out-of-band answers in order.
		const inBandOnly = await solveBeamWithStock(stock, { ...q, inCoatingBandOnly: true }, { inline: true });
		const key = (s: (typeof r.solutions)[number]) => s.elements.map((e) => `${e.partId}${e.reversed ? 'r' : ''}`).join('+') + `@${s.objectDistanceMm.toFixed(6)}`;
		expect(r.solutions.filter((s) => !usesOut(s)).map(key)).toEqual(inBandOnly.solutions.map(key));
		expect(inBandOnly.stats.partsExcluded[0].count).toBe(4);
	});

	it('mode afocal: in-band answers first', async () => {
		const q = solveRequestSchema.parse({ mode: 'afocal', wavelengthNm: 632.8, expansion: 2, expansionTolerance: 0.5, inputBeamDiameterMm: 1, maxLengthMm: 1000, limit: 50 }) as ParsedAfocalRequest;
		const r = await solveAfocalWithStock(stock, q, { inline: true });
		const flags = r.solutions.map(usesOut);
		expect(flags.includes(true)).toBe(true);
		expect(flags.includes(false)).toBe(true);
		expect(flags.indexOf(true)).toBeGreaterThan(flags.lastIndexOf(false));
	});
});
