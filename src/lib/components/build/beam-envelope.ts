/**
 * The beam envelope of a beam or afocal answer, for the drawing: the 1/e² radius W(z) of the beam
 * along the axis, through the parts of the answer, and its waists with their Rayleigh ranges.
 *
 * In air each part acts exactly (paraxially) as a thin lens of its EFL placed at its principal
 * planes: the ray transfer matrix from the front principal plane H to the back one H′ of a thick
 * lens in air is [[1, 0], [−1/f, 1]] (from memory; E. Hecht, Optics, 4th ed., 2002, sec. 6.2). A Gaussian beam's
 * q = (z − z₀) + i·z_R obeys the ABCD law, 1/q′ = 1/q − 1/f through a thin lens (H. Kogelnik and
 * T. Li, "Laser beams and resonators", Applied Optics 5, 1550, 1966, sec. III). A beam of quality
 * M² is drawn as its embedded Gaussian scaled by M (A. E. Siegman, Lasers, 1986, sec. 17.6):
 * W(z) = W₀·√(1 + ((z − z₀)/z_R)²) with z_R = π W₀² / (M² λ). Inside the glass the drawing joins
 * the radii at the two vertices with a straight line (the drawing does not need the glass path).
 *
 * The server's figures (output waist, beam at each part) come from the solver; this module only
 * draws. Lengths in mm, wavelengths in nm, positions from the bench's reference plane z = 0.
 */

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

/** Rayleigh range of a waist of 1/e² radius `w0Mm`, mm: π W₀² / (M² λ). */
export const rayleighRangeMm = (w0Mm: number, wavelengthNm: number, mSquared = 1) => (Math.PI * w0Mm * w0Mm) / (mSquared * wavelengthNm * 1e-6);

/** 1/e² radius of `seg` at `zMm`, mm. */
export const radiusAt = (seg: Pick<BeamSegment, 'waistZMm' | 'rayleighMm' | 'waistRadiusMm'>, zMm: number) =>
	seg.waistRadiusMm * Math.sqrt(1 + ((zMm - seg.waistZMm) / seg.rayleighMm) ** 2);

/**
 * The beam in air before, between and after the parts (n + 1 segments for n parts). Each part
 * without principal planes (a black box) is taken as a thin lens at its middle.
 */
export function beamSegments(input: BeamInput, parts: readonly EnvelopePart[]): BeamSegment[] {
	const lambdaMm = input.wavelengthNm * 1e-6;
	const m2 = Math.max(1, input.mSquared);
	const w0 = input.waistDiameterMm / 2;
	let z0 = input.waistPositionMm;
	let zR = rayleighRangeMm(w0, input.wavelengthNm, m2);
	const out: BeamSegment[] = [];
	let from = -Infinity;
	for (const p of parts) {
		const mid = p.firstVertexMm + p.thicknessMm / 2;
		const h = p.frontPrincipalZMm ?? mid;
		const h2 = p.backPrincipalZMm ?? mid;
		out.push({ waistZMm: z0, rayleighMm: zR, waistRadiusMm: Math.sqrt((zR * m2 * lambdaMm) / Math.PI), fromZMm: from, toZMm: p.firstVertexMm });
		// q at H: (h − z0) + i zR; 1/q' = 1/q − 1/f.
		const a = h - z0;
		const b = zR;
		const den = a * a + b * b;
		const invRe = a / den - 1 / p.eflMm;
		const invIm = -b / den;
		const d2 = invRe * invRe + invIm * invIm;
		const qRe = invRe / d2;
		const qIm = -invIm / d2;
		z0 = h2 - qRe;
		zR = qIm;
		from = p.firstVertexMm + p.thicknessMm;
	}
	out.push({ waistZMm: z0, rayleighMm: zR, waistRadiusMm: Math.sqrt((zR * m2 * lambdaMm) / Math.PI), fromZMm: from, toZMm: Infinity });
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

/** Peak irradiance of a Gaussian beam of power P (W) at a waist of 1/e² radius w₀ (mm): 2P / (π w₀²), W/cm². */
export function peakIrradianceWPerCm2(powerW: number, waistRadiusMm: number): number {
	const wCm = waistRadiusMm / 10;
	return (2 * powerW) / (Math.PI * wCm * wCm);
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

/** A length in mm as µm below 1 mm ("20.0 µm"), else mm ("2.00 mm"). */
export function smallLength(mm: number | null | undefined): string {
	if (mm === null || mm === undefined || !Number.isFinite(mm)) return '–';
	return Math.abs(mm) < 1 ? `${(mm * 1000).toFixed(1)} µm` : `${mm.toFixed(2)} mm`;
}
