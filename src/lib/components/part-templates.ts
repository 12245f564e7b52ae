/**
 * Surface templates for the part form: picking a kind fills a sensible prescription for a
 * target EFL and diameter, which the user then corrects from the datasheet.
 *
 * Radii come from the thin-lens lensmaker's equation 1/f = (n − 1)(1/R1 − 1/R2) (Hecht,
 * Optics, 5th ed. 2017, §5.2.3, from memory); meniscus shapes use R2 = 2.5·R1 (a shape
 * choice, common practice, no source); the doublet splits the power by the thin-lens
 * achromat condition φ1/V1 + φ2/V2 = 0 (Hecht §6.3.2, from memory) with each V taken from
 * the chosen glass's own dispersion formula (`abbeNumber` of the material model), then
 * corrects the split for the thicknesses (see `achromat`). Centre thicknesses leave about
 * 1.5 mm of edge for positive lenses and 1.5 mm of centre for negative ones.
 */
import { abbeNumber, buildElement, cardinalPoints, refractiveIndex, sagFromRadiusMm, WAVELENGTH_C_NM, WAVELENGTH_D_NM, WAVELENGTH_F_NM } from '$lib/optics';

export interface TemplateSurface {
	radiusMm: number | null;
	thicknessMm: number | null;
	material: string | null;
}

const round = (x: number, digits = 2) => Math.round(x * 10 ** digits) / 10 ** digits;

function nOf(material: string): number {
	try {
		return refractiveIndex(material, WAVELENGTH_D_NM);
	} catch {
		return 1.517;
	}
}

/** Abbe number from the material's dispersion formula; null when it has no index at d, F and C. */
function vOf(material: string): number | null {
	try {
		const v = abbeNumber(material);
		return Number.isFinite(v) && v > 0 ? v : null;
	} catch {
		return null;
	}
}

const specsOf = (surfaces: TemplateSurface[]) =>
	surfaces.map((s, i) => (i === surfaces.length - 1 ? { radiusMm: s.radiusMm } : { radiusMm: s.radiusMm, thicknessMm: s.thicknessMm ?? 0, material: s.material }));

/** Back focal distance at a wavelength, mm (null when the surfaces do not build). */
function bflAt(surfaces: TemplateSurface[], wavelengthNm: number): number | null {
	const built = buildElement(specsOf(surfaces), wavelengthNm);
	const cp = built.ok ? cardinalPoints(built.value.matrix) : null;
	return cp ? cp.bflMm : null;
}

/**
 * Cemented achromat of focal length f: crown `glass` equiconvex in front, flint behind.
 * The powers follow the thin-lens achromat condition φ1/V1 + φ2/V2 = 0 with φ1 + φ2 = φ
 * (Hecht, Optics, 5th ed. 2017, §6.3.2, from memory), V of each glass from its own
 * dispersion formula. The thin-lens split leaves some colour once the lenses have
 * thickness, so the crown's share of the power is then corrected by a few secant steps
 * until the back focus at F and at C coincide (the F–C focal shift is zero to well under
 * 0.01 mm before the radii are rounded to 0.01 mm), and all radii are scaled to the target EFL.
 */
function achromat(glass: string, flint: string, f: number, h: number): TemplateSurface[] {
	const n1 = nOf(glass);
	const n2 = nOf(flint);
	const v1 = vOf(glass) ?? 64.2;
	const v2 = vOf(flint) ?? 36.4;
	const phi = 1 / f;
	const shape = (share: number): TemplateSurface[] => {
		const phi1 = phi * share;
		const phi2 = phi - phi1;
		const r1 = (2 * (n1 - 1)) / phi1;
		const r2 = -r1;
		const r3 = 1 / (1 / r2 - phi2 / (n2 - 1));
		let out: TemplateSurface[] = [
			{ radiusMm: r1, thicknessMm: 0, material: glass },
			{ radiusMm: r2, thicknessMm: 0, material: flint },
			{ radiusMm: r3, thicknessMm: null, material: null }
		];
		// Thicknesses for the edge, then the radii scaled to the EFL; again, since scaling moves the edge.
		for (let pass = 0; pass < 3; pass++) {
			const [a, b, c] = out.map((x) => x.radiusMm);
			out[0] = { ...out[0], thicknessMm: centreThickness(a, b, h) };
			out[1] = { ...out[1], thicknessMm: round(Math.max(1.5, 1.5 + (sagFromRadiusMm(b, h) ?? 0) - (sagFromRadiusMm(c, h) ?? 0)), 1) };
			out = matchEfl(out, f, false);
		}
		return out;
	};
	const colour = (share: number): number | null => {
		const s = shape(share);
		const bf = bflAt(s, WAVELENGTH_F_NM);
		const bc = bflAt(s, WAVELENGTH_C_NM);
		return bf === null || bc === null ? null : bf - bc;
	};
	// Thin-lens split: φ1 = φ·V1/(V1 − V2).
	let share = v1 !== v2 ? v1 / (v1 - v2) : 1;
	if (v1 - v2 > 1) {
		let a = share,
			ca = colour(a);
		let b = share * 1.02,
			cb = colour(b);
		for (let k = 0; k < 12 && ca !== null && cb !== null && Math.abs(cb) > 1e-7 && cb !== ca; k++) {
			const next = b - (cb * (b - a)) / (cb - ca);
			if (!(next > 0.5 && next < 20)) break;
			[a, ca] = [b, cb];
			[b, cb] = [next, colour(next)];
		}
		if (cb !== null && ca !== null && Math.abs(cb) <= Math.abs(ca)) share = b;
		else if (ca !== null) share = a;
	}
	const out = shape(share).map((s) => ({ ...s, radiusMm: s.radiusMm === null ? null : round(s.radiusMm) }));
	return out;
}

/** Centre thickness for a singlet so that the thinner of centre and edge is about 1.5 mm. */
function centreThickness(r1: number | null, r2: number | null, h: number): number {
	const s1 = sagFromRadiusMm(r1, h) ?? 0;
	const s2 = sagFromRadiusMm(r2, h) ?? 0;
	// edge = t + s2 − s1, so t = edge − s2 + s1
	return round(Math.max(1.5, 1.5 - s2 + s1), 1);
}

/**
 * The thin-lens radii miss the target once the lens has thickness (by the (n − 1)² d / (n R1 R2)
 * term of the thick-lens formula, up to ~10 % for a strong meniscus). Scale all radii together,
 * keeping the thicknesses, until the thick lens has the target EFL at the d line (a few passes).
 */
function matchEfl(surfaces: TemplateSurface[], targetMm: number, rounded = true): TemplateSurface[] {
	const r = (x: number) => (rounded ? round(x) : x);
	let out = surfaces;
	for (let pass = 0; pass < (rounded ? 4 : 8); pass++) {
		const built = buildElement(specsOf(out), WAVELENGTH_D_NM);
		const cp = built.ok ? cardinalPoints(built.value.matrix) : null;
		if (!cp || !(cp.eflMm / targetMm > 0)) return out;
		const k = targetMm / cp.eflMm;
		if (Math.abs(k - 1) < (rounded ? 2e-4 : 1e-9)) return out;
		out = out.map((s) => ({ ...s, radiusMm: s.radiusMm === null ? null : r(s.radiusMm * k) }));
	}
	return out;
}

/**
 * Surfaces for a kind, or null when the kind has no template ('other').
 * `eflMm` is signed (negative for diverging kinds; its sign is forced to suit the kind).
 */
export function surfaceTemplate(
	kind: string,
	opts: { eflMm: number; diameterMm: number; material?: string; flint?: string }
): TemplateSurface[] | null {
	const glass = opts.material || '517642';
	const n = nOf(glass);
	const h = opts.diameterMm / 2;
	const f = Math.abs(opts.eflMm) || 100;
	const singlet = (r1: number | null, r2: number | null): TemplateSurface[] => [
		{ radiusMm: r1 === null ? null : round(r1), thicknessMm: centreThickness(r1, r2, h), material: glass },
		{ radiusMm: r2 === null ? null : round(r2), thicknessMm: null, material: null }
	];
	switch (kind) {
		case 'plano-convex':
			return singlet((n - 1) * f, null);
		case 'biconvex':
			return singlet(2 * (n - 1) * f, -2 * (n - 1) * f);
		case 'plano-concave':
			return singlet(null, (n - 1) * f);
		case 'biconcave':
			return singlet(-2 * (n - 1) * f, 2 * (n - 1) * f);
		case 'positive-meniscus': {
			const r1 = 0.6 * (n - 1) * f;
			return matchEfl(singlet(r1, 2.5 * r1), f);
		}
		case 'negative-meniscus': {
			const r2 = 0.6 * (n - 1) * f;
			return matchEfl(singlet(2.5 * r2, r2), -f);
		}
		case 'achromatic-doublet':
			return achromat(glass, opts.flint || '620364', f, h);
		default:
			return null;
	}
}
