/**
 * The demo scenario: an invented lab, the "Tarnwell Institute imaging lab", with its stockroom,
 * four invented suppliers and an invented catalogue of stock lenses. Nothing here is taken from any
 * vendor's catalogue: prescriptions are computed from round focal lengths with the lensmaker's equation.
 * Glasses are given by their six-digit glass codes (ISO convention nd/vd) or as openly published
 * materials (fused silica, calcium fluoride).
 */
import demoUsers from './demo-users.json' with { type: 'json' };
import { mulberry32 } from '../src/lib/prng';

export interface DemoSurface {
	radiusMm: number | null;
	thicknessMm?: number;
	materialCode?: string | null;
}

export interface DemoPart {
	sku: string;
	name: string;
	kind:
		| 'plano-convex'
		| 'biconvex'
		| 'plano-concave'
		| 'biconcave'
		| 'positive-meniscus'
		| 'negative-meniscus'
		| 'achromatic-doublet'
		| 'other';
	diameterMm: number;
	eflMm: number;
	bflMm: number | null;
	centerThicknessMm: number | null;
	designWavelengthNm: number;
	surfaces: DemoSurface[];
	coating: string | null;
	supplier: string;
	supplierPartNumber: string;
	unitPriceMinor: number;
	leadTimeDays: number;
	reorderPoint: number;
	reorderQuantity: number;
}

export const LAB_NAME = 'Tarnwell Institute imaging lab';

/** Demo sign-ins, one per role (and a second engineer); the list lives in JSON so scripts can print it. */
export const DEMO_USERS = demoUsers as { email: string; name: string; role: 'admin' | 'stockroom' | 'engineer' | 'purchaser' }[];

export const DEMO_SUPPLIERS = [
	{ name: 'Kestrelmoor Optics', contactEmail: 'orders@kestrelmoor.example', prefix: 'KM' },
	{ name: 'Lumenvale Supply', contactEmail: 'sales@lumenvale.example', prefix: 'LV' },
	{ name: 'Tarnhollow Glassworks', contactEmail: 'desk@tarnhollow.example', prefix: 'TH' },
	{ name: 'Brightwick Components', contactEmail: 'hello@brightwick.example', prefix: 'BW' }
] as const;

export const DEMO_MATERIALS = [
	{ code: '517642', name: 'Borosilicate crown 517642', model: 'glass-code', nd: 1.517, vd: 64.2 },
	{ code: '589613', name: 'Barium crown 589613', model: 'glass-code', nd: 1.589, vd: 61.3 },
	{ code: '620364', name: 'Flint 620364', model: 'glass-code', nd: 1.62, vd: 36.4 },
	{ code: '785258', name: 'Dense flint 785258', model: 'glass-code', nd: 1.785, vd: 25.8 },
	{ code: 'fused-silica', name: 'Fused silica (Sellmeier, Malitson 1965)', model: 'sellmeier', nd: 1.4585, vd: 67.8 },
	{ code: 'caf2', name: 'Calcium fluoride (Sellmeier, Malitson 1963)', model: 'sellmeier', nd: 1.4338, vd: 95.2 }
] as const;

const ND: Record<string, number> = Object.fromEntries(DEMO_MATERIALS.map((m) => [m.code, m.nd]));

export const DEMO_LOCATIONS = [
	{ code: 'A1-D1', name: 'Cabinet A1, drawer 1: plano-convex, 12.7 mm' },
	{ code: 'A1-D2', name: 'Cabinet A1, drawer 2: plano-convex, 25.4 mm' },
	{ code: 'A1-D3', name: 'Cabinet A1, drawer 3: plano-convex, 50.8 mm' },
	{ code: 'A2-D1', name: 'Cabinet A2, drawer 1: biconvex' },
	{ code: 'A2-D2', name: 'Cabinet A2, drawer 2: negative lenses' },
	{ code: 'A2-D3', name: 'Cabinet A2, drawer 3: meniscus lenses' },
	{ code: 'B1-D1', name: 'Cabinet B1, drawer 1: achromatic doublets, 12.7 mm' },
	{ code: 'B1-D2', name: 'Cabinet B1, drawer 2: achromatic doublets, 25.4 mm' },
	{ code: 'B1-D3', name: 'Cabinet B1, drawer 3: UV and IR materials' },
	{ code: 'B2-D1', name: 'Cabinet B2, drawer 1: condensers and odd parts' },
	{ code: 'QC-SHELF', name: 'Inspection shelf (quarantine)' },
	{ code: 'BENCH-3', name: 'Optical bench 3 (return tray)' }
] as const;

export const DEMO_PROJECTS = [
	{ code: 'FLUO-CAM', name: 'Fluorescence camera relay for the slide scanner' },
	{ code: 'BEAM-X4', name: 'Beam expander for the alignment laser' },
	{ code: 'TEACH-LAB', name: 'Undergraduate optics practical' }
] as const;

/** Deterministic pseudo-random numbers (mulberry32), the same on every machine. */
export const prng = mulberry32;

const round = (x: number, step = 0.01) => Number((Math.round(x / step) * step).toFixed(step < 0.1 ? 2 : 1));
/** Signed sag z(h) of a surface of radius r (null: flat): positive when the edge lies right of the vertex. */
const sag = (r: number | null, h: number) => (r === null ? 0 : r - Math.sign(r) * Math.sqrt(r * r - h * h));

/** Centre thickness of a singlet so that its edge keeps at least `edge` mm of glass (and the centre 1.5 mm). */
function centreFor(r1: number | null, r2: number | null, d: number, edge: number) {
	return round(Math.max(edge - sag(r2, d / 2) + sag(r1, d / 2), 1.5), 0.1);
}

function pcx(d: number, f: number, code = '517642') {
	const n = ND[code];
	const r = round((n - 1) * f, 0.01); // plano-convex thick lens: f = R / (n - 1) exactly
	const ct = centreFor(r, null, d, d <= 13 ? 1.2 : 2.0);
	const bfl = f - ct / n;
	return { surfaces: [{ radiusMm: r, thicknessMm: ct, materialCode: code }, { radiusMm: null }], ct, bfl };
}

/** Equiconvex (or equiconcave with f < 0) lens: solve the thick-lens equation for R. */
function symmetric(d: number, f: number, code = '517642') {
	const n = ND[code];
	const convex = f > 0;
	let r = 2 * (n - 1) * Math.abs(f);
	let ct = 2;
	for (let i = 0; i < 20; i++) {
		ct = convex ? centreFor(r, -r, d, 1.2) : 2.0;
		// 1/f = (n-1) [2/R - (n-1) t / (n R^2)]  (signed R: R1 = +R, R2 = -R for convex)
		const R1 = convex ? r : -r;
		const phi = (n - 1) * (2 / R1 - ((n - 1) * ct) / (n * R1 * R1));
		r = r * (phi * f);
	}
	r = round(r, 0.01);
	const R1 = convex ? r : -r;
	const phi = (n - 1) * (2 / R1 - ((n - 1) * ct) / (n * R1 * R1));
	const efl = 1 / phi;
	const bfl = efl * (1 - ((n - 1) * ct) / (n * R1));
	return {
		surfaces: [{ radiusMm: R1, thicknessMm: ct, materialCode: code }, { radiusMm: -R1 }],
		ct,
		bfl,
		efl
	};
}

function pcv(d: number, f: number, code = '517642') {
	const n = ND[code];
	const r = round((n - 1) * f, 0.01); // f < 0, R < 0: concave first surface
	return { surfaces: [{ radiusMm: r, thicknessMm: 2.0, materialCode: code }, { radiusMm: null }], ct: 2.0, bfl: f - 2.0 / n };
}

/**
 * Meniscus with shape factor q = (R2 + R1)/(R2 - R1): thin-lens radii, the thickness chosen for the
 * edge, then both radii scaled together until the thick lens has the named EFL at the d line.
 */
function meniscus(d: number, f: number, q: number, code = '517642') {
	const n = ND[code];
	// thin lens: 1/f = (n-1)(1/R1 - 1/R2); with R1 = 2f(n-1)/(q+1), R2 = 2f(n-1)/(q-1)
	const r1 = (2 * f * (n - 1)) / (q + 1);
	const r2 = (2 * f * (n - 1)) / (q - 1);
	const shape = (k: number): DemoSurface[] => {
		const [a, b] = [round(r1 * k), round(r2 * k)];
		return [{ radiusMm: a, thicknessMm: centreFor(a, b, d, 1.5), materialCode: code }, { radiusMm: b }];
	};
	const k = scaleForEfl(f, shape);
	return { surfaces: shape(k), ct: centreFor(round(r1 * k), round(r2 * k), d, 1.5), bfl: null };
}

/** Paraxial EFL of surfaces at the d line: ray transfer matrices with nd of each glass (common practice, no source). */
function eflAtD(surfaces: readonly DemoSurface[]): number {
	let [a, b, c, dd] = [1, 0, 0, 1];
	let n = 1;
	for (const s of surfaces) {
		const after = s.materialCode ? ND[s.materialCode] : 1;
		const power = s.radiusMm === null ? 0 : (after - n) / s.radiusMm;
		[c, dd] = [c - power * a, dd - power * b];
		if (s.thicknessMm) [a, b] = [a + (s.thicknessMm / after) * c, b + (s.thicknessMm / after) * dd];
		n = after;
	}
	return -1 / c;
}

/**
 * Cemented achromat: the thin-lens power split (crown equiconvex, flint rear surface), then all radii
 * scaled together until the thick lens has the named EFL at the d line (the thin-lens radii miss it
 * by up to 4 % for short focal lengths, which a catalogue name "f = 19 mm" should not).
 */
function doublet(d: number, f: number) {
	const [c, fl] = [DEMO_MATERIALS[0], DEMO_MATERIALS[2]];
	const phi = 1 / f;
	const phiA = (phi * c.vd) / (c.vd - fl.vd);
	const phiB = (-phi * fl.vd) / (c.vd - fl.vd);
	const r1 = (2 * (c.nd - 1)) / phiA;
	const r2 = -r1;
	// flint: phiB = (nB - 1)(1/r2 - 1/r3)
	const r3 = 1 / (1 / r2 - phiB / (fl.nd - 1));
	const t2 = round(Math.max(1.5, d / 12), 0.1);
	const shape = (k: number) => {
		const t1 = centreFor(r1 * k, r2 * k, d, 1.2);
		return [
			{ radiusMm: round(r1 * k), thicknessMm: t1, materialCode: c.code },
			{ radiusMm: round(r2 * k), thicknessMm: t2, materialCode: fl.code },
			{ radiusMm: round(r3 * k) }
		];
	};
	const surfaces = shape(scaleForEfl(f, shape));
	return { surfaces, ct: round((surfaces[0].thicknessMm ?? 0) + t2, 0.1), bfl: null };
}

/** The factor on all radii of `shape` that gives the thick lens the EFL `f` at the d line (fixed-point iteration). */
function scaleForEfl(f: number, shape: (k: number) => DemoSurface[]): number {
	let k = 1;
	for (let i = 0; i < 12; i++) k *= f / eflAtD(shape(k));
	return k;
}

/**
 * The lab's own coating bands, named after what it uses them for (invented for the demo, no supplier's
 * standard ranges): the visible relay band, the near-infrared band of the scanner's lasers, and the
 * telecom band of the fibre bench.
 */
const COATINGS = ['uncoated', 'AR 430–670 nm (visible relay)', 'AR 760–980 nm (scanner NIR)', 'AR 1260–1620 nm (fibre bench)'];

/**
 * Which drawer of the demo stockroom holds a part (the cabinets of `DEMO_LOCATIONS`).
 */
export function drawerFor(p: Pick<DemoPart, 'kind' | 'diameterMm' | 'surfaces'>): string {
	const m = p.surfaces[0]?.materialCode;
	if (p.kind === 'other') return 'B2-D1';
	if (m === 'fused-silica' || m === 'caf2') return 'B1-D3';
	if (p.kind === 'plano-convex') return p.diameterMm < 20 ? 'A1-D1' : p.diameterMm < 40 ? 'A1-D2' : 'A1-D3';
	if (p.kind === 'biconvex') return 'A2-D1';
	if (p.kind === 'plano-concave' || p.kind === 'biconcave') return 'A2-D2';
	if (p.kind.endsWith('meniscus')) return 'A2-D3';
	return p.diameterMm < 20 ? 'B1-D1' : 'B1-D2';
}

/**
 * The lab's own stock numbers: internal bin codes. "TW" (Tarnwell), the drawer without its dash, then the
 * slot in that drawer counted from the front (`TW-A1D2-07`: cabinet A1, drawer 2, slot 7). They say where
 * a part lives, not what it is: the catalogue's columns say that.
 */
export function binCode(drawer: string, slot: number): string {
	return `TW-${drawer.replace('-', '')}-${String(slot).padStart(2, '0')}`;
}

/** The demo catalogue: 90 invented parts with computed prescriptions. */
export function demoParts(): DemoPart[] {
	const out: DemoPart[] = [];
	const rnd = prng(20261202);
	let pn = 1000;
	const slots = new Map<string, number>();
	const add = (
		kind: DemoPart['kind'],
		label: string,
		d: number,
		f: number,
		geo: { surfaces: DemoSurface[]; ct: number; bfl: number | null },
		extra: Partial<DemoPart> = {}
	) => {
		const supplier = DEMO_SUPPLIERS[out.length % DEMO_SUPPLIERS.length];
		const drawer = drawerFor({ kind, diameterMm: d, surfaces: geo.surfaces });
		const slot = (slots.get(drawer) ?? 0) + 1;
		slots.set(drawer, slot);
		const material = geo.surfaces[0]?.materialCode;
		const basePrice = kind === 'achromatic-doublet' ? 6800 : kind.includes('meniscus') ? 3900 : 2600;
		const sizeFactor = d < 20 ? 0.8 : d < 40 ? 1 : 2.1;
		const matFactor = material === 'fused-silica' ? 2.2 : material === 'caf2' ? 4.5 : 1;
		out.push({
			sku: binCode(drawer, slot),
			name: `${label} Ø${d} mm, f = ${f} mm`,
			kind,
			diameterMm: d,
			eflMm: f,
			bflMm: geo.bfl === null ? null : round(geo.bfl, 0.01),
			centerThicknessMm: geo.ct,
			designWavelengthNm: 587.6,
			surfaces: geo.surfaces,
			coating: COATINGS[Math.floor(rnd() * COATINGS.length)],
			supplier: supplier.name,
			supplierPartNumber: `${supplier.prefix}-${pn++}`,
			unitPriceMinor: Math.round((basePrice * sizeFactor * matFactor + rnd() * 900) / 10) * 10,
			leadTimeDays: 5 + Math.floor(rnd() * 40),
			reorderPoint: 1 + Math.floor(rnd() * 3),
			reorderQuantity: 2 + Math.floor(rnd() * 4),
			...extra
		});
	};

	for (const f of [15, 20, 25, 30, 40, 50, 75, 100]) add('plano-convex', 'Plano-convex lens', 12.7, f, pcx(12.7, f));
	for (const f of [25, 35, 40, 50, 60, 75, 100, 125, 150, 200, 250, 300, 400, 500, 750, 1000])
		add('plano-convex', 'Plano-convex lens', 25.4, f, pcx(25.4, f));
	for (const f of [60, 75, 100, 150, 200, 250, 300, 500]) add('plano-convex', 'Plano-convex lens', 50.8, f, pcx(50.8, f));
	for (const f of [50, 100, 200]) add('plano-convex', 'Fused silica plano-convex lens', 25.4, f, pcx(25.4, f, 'fused-silica'));
	for (const f of [50, 100]) add('plano-convex', 'Calcium fluoride plano-convex lens', 25.4, f, pcx(25.4, f, 'caf2'));
	for (const [d, f] of [
		[12.7, 20], [12.7, 30], [12.7, 50], [25.4, 30], [25.4, 50], [25.4, 75], [25.4, 100],
		[25.4, 150], [25.4, 200], [50.8, 100], [50.8, 200], [50.8, 300]
	] as const) {
		const g = symmetric(d, f);
		add('biconvex', 'Biconvex lens', d, f, g);
	}
	for (const [d, f] of [[12.7, -25], [12.7, -50], [25.4, -25], [25.4, -50], [25.4, -75], [25.4, -100], [25.4, -150], [50.8, -100]] as const)
		add('plano-concave', 'Plano-concave lens', d, f, pcv(d, f));
	for (const [d, f] of [[12.7, -15], [25.4, -25], [25.4, -50], [25.4, -100]] as const) {
		const g = symmetric(d, f);
		add('biconcave', 'Biconcave lens', d, f, { ...g, bfl: g.bfl });
	}
	for (const f of [50, 75, 100, 150, 200]) add('positive-meniscus', 'Positive meniscus lens', 25.4, f, meniscus(25.4, f, 2.5));
	for (const f of [-100, -150, -200]) add('negative-meniscus', 'Negative meniscus lens', 25.4, f, meniscus(25.4, f, 2.5));
	for (const f of [19, 25, 30, 40, 50, 75]) add('achromatic-doublet', 'Achromatic doublet', 12.7, f, doublet(12.7, f));
	for (const f of [40, 50, 60, 75, 100, 125, 150, 200, 250, 300]) add('achromatic-doublet', 'Achromatic doublet', 25.4, f, doublet(25.4, f));
	for (const f of [150, 200, 300]) add('achromatic-doublet', 'Achromatic doublet', 50.8, f, doublet(50.8, f));
	// Two condensers known only from their datasheet numbers (no radii): a black-box model is used.
	add('other', 'Aspheric condenser (datasheet only)', 25.4, 20, { surfaces: [], ct: 11.5, bfl: 12.3 });
	add('other', 'Aspheric condenser (datasheet only)', 50.8, 40, { surfaces: [], ct: 17.0, bfl: 28.4 });
	return out;
}
