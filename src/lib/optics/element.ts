/**
 * Thick elements: a part's surfaces turned into its vertex-to-vertex ray transfer matrix
 * at one wavelength, its reversed orientation, edge thickness and the rescaling to a
 * measured EFL. Black-box parts (no radii) live in `black-box.ts`.
 */
import { type Result, ok, fail, InvalidPrescriptionError, OpticsError, InvalidArgumentError } from './errors';
import { type Mat2, create, multiply, translation, refraction, set, reverse as reverseMat } from './matrix';
import { refractiveIndex } from './materials';
import { type CardinalPoints, cardinalPoints } from './cardinal';
import { sagFromRadiusMm } from './sag';

/**
 * One surface of a part as stored in the catalogue (same shape as the API Part JSON).
 * `thicknessMm` and `material` describe the medium AFTER this surface, up to the next
 * one; material null or absent is air. The last surface has neither.
 */
export interface SurfaceSpec {
	/** Radius of curvature in mm, + when the centre lies to the right (+z); null = flat. */
	readonly radiusMm: number | null;
	/** Axial thickness of the medium after this surface, mm (absent on the last surface). */
	readonly thicknessMm?: number | null;
	/** Material after this surface: open name or six-digit glass code; null = air. */
	readonly material?: string | null;
}

/** A surface resolved at one wavelength, placed relative to the element's first vertex. */
export interface ElementSurface {
	/** Radius in mm (null = flat), in the element's current orientation. */
	readonly radiusMm: number | null;
	/** Vertex position from the first vertex, mm. */
	readonly vertexMm: number;
	/** Refractive index before the surface. */
	readonly indexBefore: number;
	/** Refractive index after the surface. */
	readonly indexAfter: number;
}

/**
 * A part as a thick element at one wavelength, in one orientation, in air.
 * `matrix` maps the ray at the first vertex plane to the ray at the last vertex plane.
 */
export interface ThickElement {
	/** 'prescription' when built from surfaces, 'black-box' when from EFL/BFL/thickness. */
	readonly kind: 'prescription' | 'black-box';
	/** Wavelength the matrix was computed for, nm. */
	readonly wavelengthNm: number;
	/** Vertex-to-vertex reduced ray transfer matrix [A, B, C, D]. */
	readonly matrix: Mat2;
	/** First vertex to last vertex, mm. */
	readonly thicknessMm: number;
	/** Resolved surfaces (null for a black box, which has none). */
	readonly surfaces: readonly ElementSurface[] | null;
	/** The surfaces as given, in this orientation, radii already scaled (null for a black box). */
	readonly prescription: readonly SurfaceSpec[] | null;
	/** Clear aperture diameter, mm, or null when unknown. */
	readonly clearApertureMm: number | null;
	/**
	 * Outer (glass) diameter, mm, when known: where the glass ends. The solver keeps the
	 * glass of neighbouring parts apart up to it; absent or null: the clear aperture stands for it.
	 */
	readonly outerDiameterMm?: number | null;
	/** True when this is the catalogue part turned round. */
	readonly reversed: boolean;
	/** Factor applied to all curvatures to match a measured EFL (1 when none). */
	readonly curvatureScale: number;
}

/** Options of `buildElement`. */
export interface BuildElementOptions {
	/** Clear aperture diameter in mm; checked against every surface's sphere. */
	readonly clearApertureMm?: number | null;
	/** Outer diameter in mm (the glass edge), carried for the solver's touching check. */
	readonly outerDiameterMm?: number | null;
	/** Build the reversed orientation (see `reverseSurfaces`). */
	readonly reversed?: boolean;
	/** A measured EFL at its own wavelength: the element is rescaled to it (`measuredCurvatureScale`). */
	readonly measured?: { readonly eflMm: number; readonly wavelengthNm: number } | null;
}

/**
 * The surfaces of a part turned round: opposite order, radii negated, the medium between
 * each pair of surfaces kept between the same pair.
 */
export function reverseSurfaces(surfaces: readonly SurfaceSpec[]): SurfaceSpec[] {
	const n = surfaces.length;
	const out: SurfaceSpec[] = [];
	for (let k = 0; k < n; k++) {
		const s = surfaces[n - 1 - k];
		const radiusMm = s.radiusMm === null ? null : -s.radiusMm;
		if (k === n - 1) out.push({ radiusMm });
		else {
			const medium = surfaces[n - 2 - k];
			out.push({ radiusMm, thicknessMm: medium.thicknessMm ?? 0, material: medium.material ?? null });
		}
	}
	return out;
}

function validate(surfaces: readonly SurfaceSpec[], clearApertureMm: number | null): void {
	if (surfaces.length < 2) throw new InvalidPrescriptionError('A part needs at least two surfaces.');
	surfaces.forEach((s, i) => {
		const label = `Surface ${i + 1}`;
		if (s.radiusMm !== null && (!Number.isFinite(s.radiusMm) || s.radiusMm === 0)) {
			throw new InvalidPrescriptionError(`${label}: the radius must be a non-zero number of mm, or null for flat.`);
		}
		const last = i === surfaces.length - 1;
		if (last) {
			if ((s.thicknessMm ?? 0) !== 0 || (s.material ?? null) !== null) {
				throw new InvalidPrescriptionError(`${label} is the last surface: it has no thickness or material after it.`);
			}
		} else if (typeof s.thicknessMm !== 'number' || !Number.isFinite(s.thicknessMm) || s.thicknessMm < 0) {
			throw new InvalidPrescriptionError(`${label}: the thickness after it must be a number ≥ 0 mm.`);
		}
		if (clearApertureMm !== null && s.radiusMm !== null && clearApertureMm / 2 > Math.abs(s.radiusMm)) {
			throw new InvalidPrescriptionError(
				`${label}: a clear aperture of ${clearApertureMm} mm does not fit on a sphere of radius ${s.radiusMm} mm.`
			);
		}
	});
	if (clearApertureMm !== null && !(clearApertureMm > 0 && Number.isFinite(clearApertureMm))) {
		throw new InvalidPrescriptionError('The clear aperture must be a positive number of mm.');
	}
}

function scaled(surfaces: readonly SurfaceSpec[], curvatureScale: number): SurfaceSpec[] {
	return surfaces.map((s) => ({ ...s, radiusMm: s.radiusMm === null ? null : s.radiusMm / curvatureScale }));
}

/** Resolves indices and builds the vertex-to-vertex matrix; throws OpticsError. */
function assemble(specs: readonly SurfaceSpec[], wavelengthNm: number, out: Mat2): ElementSurface[] {
	const step = create();
	set(out, 1, 0, 0, 1);
	const resolved: ElementSurface[] = [];
	let nBefore = 1;
	let z = 0;
	for (let i = 0; i < specs.length; i++) {
		const s = specs[i];
		const last = i === specs.length - 1;
		const nAfter = last ? 1 : refractiveIndex(s.material ?? null, wavelengthNm);
		resolved.push({ radiusMm: s.radiusMm, vertexMm: z, indexBefore: nBefore, indexAfter: nAfter });
		multiply(out, refraction(step, nBefore, nAfter, s.radiusMm), out);
		if (!last) {
			const t = s.thicknessMm ?? 0;
			multiply(out, translation(step, t, nAfter), out);
			z += t;
		}
		nBefore = nAfter;
	}
	return resolved;
}

/**
 * The part's surfaces → its thick element at `wavelengthNm` (nm), in air on both sides.
 * Fails (never throws) with 'invalid-prescription', 'unknown-material' or
 * 'wavelength-out-of-range' so a catalogue snapshot can skip one bad part and go on.
 */
export function buildElement(
	surfaces: readonly SurfaceSpec[],
	wavelengthNm: number,
	options: BuildElementOptions = {}
): Result<ThickElement> {
	try {
		const clearApertureMm = options.clearApertureMm ?? null;
		validate(surfaces, clearApertureMm);
		const reversed = options.reversed ?? false;
		const oriented = reversed ? reverseSurfaces(surfaces) : surfaces;
		const curvatureScale = options.measured ? measuredCurvatureScale(oriented, options.measured) : 1;
		const specs = curvatureScale === 1 ? oriented : scaled(oriented, curvatureScale);
		if (curvatureScale !== 1) validate(specs, clearApertureMm);
		const matrix = create();
		const resolved = assemble(specs, wavelengthNm, matrix);
		return ok({
			kind: 'prescription',
			wavelengthNm,
			matrix,
			thicknessMm: resolved[resolved.length - 1].vertexMm,
			surfaces: resolved,
			prescription: specs,
			clearApertureMm,
			outerDiameterMm: options.outerDiameterMm ?? null,
			reversed,
			curvatureScale
		});
	} catch (e) {
		if (e instanceof OpticsError) return fail(e);
		throw e;
	}
}

/**
 * The factor k by which all curvatures of `surfaces` must be multiplied (radii divided)
 * so that the EFL at the measurement wavelength equals the measured EFL. The deviation
 * of a real part from its nominal EFL is thus attributed to its curvatures, which keeps
 * the matrix, the principal planes and a real-ray trace of the rescaled part consistent
 * with one another. Solved by the secant method from k₀ = f_nominal / f_measured (the
 * exact answer for a thin lens). Throws InvalidArgumentError when the measurement has
 * the opposite sign of the nominal EFL or no scale reproduces it.
 */
export function measuredCurvatureScale(
	surfaces: readonly SurfaceSpec[],
	measured: { readonly eflMm: number; readonly wavelengthNm: number }
): number {
	const m = create();
	const powerAt = (k: number): number => {
		assemble(scaled(surfaces, k), measured.wavelengthNm, m);
		return -m[2];
	};
	const target = 1 / measured.eflMm;
	const nominal = powerAt(1);
	if (!Number.isFinite(target) || !(target * nominal > 0)) {
		throw new InvalidArgumentError(
			`The measured EFL ${measured.eflMm} mm cannot rescale a part whose nominal EFL is ${1 / nominal} mm.`
		);
	}
	let k0 = 1,
		p0 = nominal - target;
	let k1 = target / nominal,
		p1 = powerAt(k1) - target;
	for (let i = 0; i < 50 && Math.abs(p1) > 1e-15 * Math.abs(target); i++) {
		const k2 = k1 - (p1 * (k1 - k0)) / (p1 - p0);
		k0 = k1;
		p0 = p1;
		k1 = k2;
		p1 = powerAt(k1) - target;
	}
	if (!(Math.abs(p1) <= 1e-12 * Math.abs(target)) || !(k1 > 0)) {
		throw new InvalidArgumentError(`No curvature scale reproduces the measured EFL ${measured.eflMm} mm.`);
	}
	return k1;
}

/**
 * The same element turned round (light enters through its former last surface).
 * Prescription elements are rebuilt from `reverseSurfaces`; black boxes get the reversed
 * matrix [[D, B], [C, A]]. Reversing twice gives the original back.
 */
export function reverseElement(element: ThickElement): ThickElement {
	if (element.prescription === null || element.surfaces === null) {
		return { ...element, matrix: reverseMat(create(), element.matrix), reversed: !element.reversed };
	}
	const specs = reverseSurfaces(element.prescription);
	const matrix = create();
	// Indices were resolvable for the original orientation, so they are for this one.
	const resolved = assemble(specs, element.wavelengthNm, matrix);
	return { ...element, matrix, surfaces: resolved, prescription: specs, reversed: !element.reversed };
}

/**
 * Axial thickness of each medium of the element at height `heightMm` from the axis
 * (edge thickness at the rim when heightMm is the clear semi-aperture), mm, in order.
 * Null when a surface's sphere does not reach that height. Negative values mean the
 * surfaces cross: the prescription is not manufacturable.
 */
export function thicknessesAtHeight(element: ThickElement, heightMm: number): number[] | null {
	const s = element.surfaces;
	if (s === null) return null;
	const out: number[] = [];
	for (let i = 0; i + 1 < s.length; i++) {
		const z1 = sagFromRadiusMm(s[i].radiusMm, heightMm);
		const z2 = sagFromRadiusMm(s[i + 1].radiusMm, heightMm);
		if (z1 === null || z2 === null) return null;
		out.push(s[i + 1].vertexMm - s[i].vertexMm + z2 - z1);
	}
	return out;
}

/** Cardinal points of an element (vertex-relative), or null when it is afocal. */
export function elementCardinalPoints(element: ThickElement): CardinalPoints | null {
	return cardinalPoints(element.matrix);
}
