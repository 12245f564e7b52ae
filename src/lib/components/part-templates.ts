/**
 * Surface templates for the part form: picking a kind fills a sensible prescription for a
 * target EFL and diameter, which the user then corrects from the datasheet.
 *
 * Radii come from the thin-lens lensmaker's equation 1/f = (n − 1)(1/R1 − 1/R2) (Hecht,
 * Optics, 5th ed. 2017, §5.2.3, from memory); meniscus shapes use R2 = 2.5·R1 (a shape
 * choice, common practice, no source); the doublet splits the power by the thin-lens
 * achromat condition φ1/V1 + φ2/V2 = 0 (Hecht §6.3.2, from memory). Centre thicknesses
 * leave about 1.5 mm of edge for positive lenses and 1.5 mm of centre for negative ones.
 */
import { buildElement, cardinalPoints, refractiveIndex, sagFromRadiusMm, WAVELENGTH_D_NM } from '$lib/optics';

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
function matchEfl(surfaces: TemplateSurface[], targetMm: number): TemplateSurface[] {
	let out = surfaces;
	for (let pass = 0; pass < 4; pass++) {
		const built = buildElement(
			out.map((s, i) => (i === out.length - 1 ? { radiusMm: s.radiusMm } : { radiusMm: s.radiusMm, thicknessMm: s.thicknessMm ?? 0, material: s.material })),
			WAVELENGTH_D_NM
		);
		const cp = built.ok ? cardinalPoints(built.value.matrix) : null;
		if (!cp || !(cp.eflMm / targetMm > 0)) return out;
		const k = targetMm / cp.eflMm;
		if (Math.abs(k - 1) < 2e-4) return out;
		out = out.map((s) => ({ ...s, radiusMm: s.radiusMm === null ? null : round(s.radiusMm * k) }));
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
		case 'achromatic-doublet': {
			const flint = opts.flint || '620364';
			const n2 = nOf(flint);
			const v1 = 64.2;
			const v2 = 36.4;
			const phi = 1 / f;
			const phi1 = (phi * v1) / (v1 - v2);
			const phi2 = (-phi * v2) / (v1 - v2);
			const r1 = (2 * (n - 1)) / phi1;
			const r2 = -r1;
			const r3 = 1 / (1 / r2 - phi2 / (n2 - 1));
			const t1 = centreThickness(r1, r2, h);
			return [
				{ radiusMm: round(r1), thicknessMm: t1, material: glass },
				{ radiusMm: round(r2), thicknessMm: round(Math.max(1.5, 1.5 + (sagFromRadiusMm(r2, h) ?? 0) - (sagFromRadiusMm(r3, h) ?? 0)), 1), material: flint },
				{ radiusMm: round(r3), thicknessMm: null, material: null }
			];
		}
		default:
			return null;
	}
}
