/**
 * The beam envelope of an afocal answer, for the drawing (beam answers bring the solver's own
 * samples): the 1/e² radius W(z) along the axis through the parts, and its waists with their
 * Rayleigh ranges.
 *
 * In air each part acts exactly (paraxially) as a thin lens of its EFL placed at its principal
 * planes: the ray transfer matrix from the front principal plane H to the back one H′ of a thick
 * lens in air is [[1, 0], [−1/f, 1]] (from memory; E. Hecht, Optics, 4th ed., 2002, sec. 6.2). The
 * beam's q goes through it by the ABCD law of the optics core (`propagateQ`, Kogelnik & Li 1966);
 * a beam of quality M² is its embedded Gaussian scaled by M (Siegman, Lasers, 1986, sec. 17.1).
 * Inside the glass the drawing joins the radii at the two vertices with a straight line (the
 * drawing does not need the glass path).
 *
 * Lengths in mm, wavelengths in nm, positions along the axis from the drawing's origin.
 */
import { peakIrradianceWPerCm2, propagateQ, rayleighRangeMm, waistRadiusMm } from '$lib/optics/gaussian';

export { peakIrradianceWPerCm2 };

/** A beam in air: waist position z₀ (mm) and Rayleigh range z_R (mm); W₀ follows from λ and M². */
export interface BeamSegment {
	waistZMm: number;
	rayleighMm: number;
	/** 1/e² waist radius, mm. */
	waistRadiusMm: number;
	/** Where this beam runs in air: from `fromZMm` to `toZMm` (±Infinity at the ends). */
	fromZMm: number;
	toZMm: number;
}

/** What the drawing needs of a part: its vertices and principal planes along the axis, its EFL. */
export interface EnvelopePart {
	firstVertexMm: number;
	thicknessMm: number;
	eflMm: number;
	frontPrincipalZMm: number | null;
	backPrincipalZMm: number | null;
}

export interface BeamInput {
	/** Input waist 1/e² diameter, mm. */
	waistDiameterMm: number;
	/** Input waist position from z = 0, mm. */
	waistPositionMm: number;
	mSquared: number;
	wavelengthNm: number;
}

/** 1/e² radius of `seg` at `zMm`, mm. */
export const radiusAt = (seg: Pick<BeamSegment, 'waistZMm' | 'rayleighMm' | 'waistRadiusMm'>, zMm: number) =>
	seg.waistRadiusMm * Math.sqrt(1 + ((zMm - seg.waistZMm) / seg.rayleighMm) ** 2);

/**
 * The beam in air before, between and after the parts (n + 1 segments for n parts). Each part
 * without principal planes (a black box) is taken as a thin lens at its middle.
 */
export function beamSegments(input: BeamInput, parts: readonly EnvelopePart[]): BeamSegment[] {
	const m2 = Math.max(1, input.mSquared);
	const lambda = input.wavelengthNm;
	let z0 = input.waistPositionMm;
	let zR = rayleighRangeMm(input.waistDiameterMm / 2, lambda, m2);
	const out: BeamSegment[] = [];
	let from = -Infinity;
	for (const p of parts) {
		const mid = p.firstVertexMm + p.thicknessMm / 2;
		const h = p.frontPrincipalZMm ?? mid;
		const h2 = p.backPrincipalZMm ?? mid;
		out.push({ waistZMm: z0, rayleighMm: zR, waistRadiusMm: waistRadiusMm(zR, lambda, m2), fromZMm: from, toZMm: p.firstVertexMm });
		// q at H is (h − z0) + i·zR; after the thin lens it holds at H′.
		const q = propagateQ({ re: h - z0, im: zR }, [1, 0, -1 / p.eflMm, 1]);
		if (!q) return out;
		z0 = h2 - q.re;
		zR = q.im;
		from = p.firstVertexMm + p.thicknessMm;
	}
	out.push({ waistZMm: z0, rayleighMm: zR, waistRadiusMm: waistRadiusMm(zR, lambda, m2), fromZMm: from, toZMm: Infinity });
	return out;
}

/**
 * Points (z, W) of the envelope from `zMinMm` to `zMaxMm`: `perSegment` even steps in each stretch
 * of air, more within ±3 z_R of a waist that lies in it, and straight joins through the glass.
 */
export function envelopePoints(segments: readonly BeamSegment[], zMinMm: number, zMaxMm: number, perSegment = 160): [number, number][] {
	const pts: [number, number][] = [];
	for (const s of segments) {
		const a = Math.max(zMinMm, s.fromZMm);
		const b = Math.min(zMaxMm, s.toZMm);
		if (!(b > a)) continue;
		const zs: number[] = [];
		for (let k = 0; k <= perSegment; k++) zs.push(a + ((b - a) * k) / perSegment);
		const near = 3 * s.rayleighMm;
		if (s.waistZMm > a && s.waistZMm < b && near < (b - a) / 4) {
			for (let k = -40; k <= 40; k++) {
				const z = s.waistZMm + (near * k) / 40;
				if (z > a && z < b) zs.push(z);
			}
		}
		zs.sort((x, y) => x - y);
		for (const z of zs) pts.push([z, radiusAt(s, z)]);
	}
	return pts;
}

/** An irradiance in W/cm² with a prefix that keeps 3 significant digits readable: "4.77 MW/cm²". */
export function irradianceText(wPerCm2: number): string {
	if (!Number.isFinite(wPerCm2)) return '–';
	const steps: [number, string][] = [
		[1e12, 'TW/cm²'],
		[1e9, 'GW/cm²'],
		[1e6, 'MW/cm²'],
		[1e3, 'kW/cm²'],
		[1, 'W/cm²'],
		[1e-3, 'mW/cm²']
	];
	for (const [f, u] of steps) if (wPerCm2 >= f) return `${Number((wPerCm2 / f).toPrecision(3))} ${u}`;
	return `${Number((wPerCm2 / 1e-3).toPrecision(3))} mW/cm²`;
}

/** A length in mm as µm below 1 mm ("20.0 µm"), m from 1000 mm ("2.95 m"), else mm ("2.00 mm"). */
export function smallLength(mm: number | null | undefined): string {
	if (mm === null || mm === undefined || !Number.isFinite(mm)) return '–';
	if (Math.abs(mm) < 1) return `${(mm * 1000).toFixed(1)} µm`;
	return Math.abs(mm) < 1000 ? `${mm.toFixed(2)} mm` : `${(mm / 1000).toFixed(2)} m`;
}
