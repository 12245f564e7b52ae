/**
 * Types of Build from stock shared by the server (solver, API) and the pages (table, layout
 * drawing, build sheet). Lengths in mm, wavelengths in nm; positions along the axis are
 * measured from the object plane (z = 0), light travels towards +z.
 */

/** The imaging question, as validated by `solveRequestSchema` (server). */
export interface SolveRequest {
	mode: 'imaging';
	/** Working wavelength, nm. */
	wavelengthNm: number;
	/** Object plane to target plane, mm. */
	trackMm: number;
	/** Signed lateral magnification (negative: inverted real image). */
	magnification: number;
	/** Relative tolerance on the magnification of single parts (0.02 = ±2 %). */
	magnificationTolerance: number;
	/** Distance of the outermost object point from the axis (half the field), mm. */
	objectHeightMm: number;
	/** Object-side numerical aperture of the marginal ray. */
	objectNA: number;
	/** 1: single parts only; 2: single parts and pairs. */
	maxElements: 1 | 2;
	/** Smallest vertex gap between two parts, mm. */
	minGapMm: number;
	/** Smallest object and back working distance, mm. */
	minWorkingDistanceMm: number;
	/** Only parts with available stock (false: catalogue parts without stock too, marked "to buy"). */
	availableOnly: boolean;
	/** Restrict the search to these parts (a kit). */
	partIds?: number[];
	/** Restrict the search to parts with usable stock in these locations (a drawer). */
	locationIds?: number[];
	/** How many solutions to return. */
	limit: number;
	/** Time budget of the search, ms. */
	timeBudgetMs: number;
}

/** Where units of a part sit. */
export interface PartPlace {
	locationId: number;
	code: string;
	name: string;
	/** Usable units in this location. */
	quantity: number;
}

/** One part of a solution, in the order light meets it. */
export interface SolutionElement {
	partId: number;
	sku: string;
	name: string;
	kind: string;
	/** True when the part is turned round from its catalogue orientation. */
	reversed: boolean;
	/** Turning it round gives the same optics (then `reversed` is false). Absent in setups saved before it was recorded. */
	symmetric?: boolean;
	/** Plain words for the bench: which way round (see `orientationText`). */
	orientation: string;
	/** First vertex from the object plane, mm. */
	firstVertexMm: number;
	/** Centre thickness (first to last vertex), mm. */
	thicknessMm: number;
	/** EFL used by the solver at the working wavelength, mm. */
	eflMm: number;
	/** Where that EFL comes from. */
	eflSource: 'measured' | 'prescription' | 'datasheet';
	/** Relative EFL uncertainty used by the tolerance view (0.01 = 1 %). */
	eflRelativeUncertainty: number;
	/** Has no available unit: must be bought (only with availableOnly: false). */
	toBuy: boolean;
	/** Available units (on hand minus active reservations). */
	available: number;
	/** Where the usable units are. */
	locations: PartPlace[];
	/** Clear aperture diameter, mm. */
	clearApertureMm: number | null;
	/** Outer diameter, mm. */
	diameterMm: number;
	/** Surfaces in this orientation (radius null = flat); null for a black-box part. */
	surfaces: { radiusMm: number | null; vertexMm: number }[] | null;
	/** Principal planes from the object plane, mm (for the drawing's construction rays). */
	frontPrincipalZMm: number | null;
	backPrincipalZMm: number | null;
}

/** A traced ray for the drawing: polyline points (z, y) from the object plane. */
export interface RayPath {
	kind: 'marginal' | 'chief' | 'edge-rim' | 'principal';
	points: [number, number][];
}

/** One answer of the solver. */
export interface Solution {
	/** Rank, 1 = best. */
	rank: number;
	elements: SolutionElement[];
	/** Object plane to the first vertex, mm (front working distance). */
	objectDistanceMm: number;
	/** Vertex gaps between consecutive parts, mm. */
	gapsMm: number[];
	/** Last vertex to the target plane, mm (back working distance). */
	backDistanceMm: number;
	trackMm: number;
	/** Magnification achieved (from the full matrix). */
	magnification: number;
	/** Object-to-target ray transfer matrix. */
	systemMatrix: { A: number; B: number; C: number; D: number };
	/** 3x3 point transfer matrix (row-major, on (w, z, y)) from the object to the target plane. */
	pointTransferMatrix: number[];
	/** Afocal pair: images for a family of positions with s + d fixed; this is its s = d member. */
	afocalFamily: boolean;
	/** The root is a merged double root (happens at m = ±1). */
	doubleRoot: boolean;
	spot: {
		/** True RMS spot radius of the axial point at the target plane, mm (null: not traced). */
		axialRmsMm: number | null;
		/** Tangential-fan RMS spot radius of the field edge at the target plane, mm. */
		edgeRmsMm: number | null;
		/** Airy radius 1.22·λ·N' at the working f-number, mm. */
		airyRadiusMm: number;
		/** max(axial, edge) RMS over the Airy radius (null: not traced). */
		ratioToAiry: number | null;
		/** Why there is no trace (black-box part), else null. */
		untracedReason: string | null;
		/** Third-order estimate of the screen, mm. */
		screenEstimateMm: number;
	};
	vignetting: {
		/** Axial marginal ray clipped by a clear aperture. */
		axial: boolean;
		/** Field-edge rays clipped by a clear aperture. */
		edge: boolean;
		/** Largest ray height over clear semi-aperture across all surfaces (> 1: clipped). */
		worstFill: number;
	};
	/** Drawing data: rays traced for real and the paraxial construction rays. */
	rays: RayPath[];
	/** Tolerance view: what each part's EFL error does. */
	tolerance: ToleranceRow[];
}

/** Effect of one part's EFL being off by its tolerance. */
export interface ToleranceRow {
	partIndex: number;
	sku: string;
	/** Relative EFL deviation applied (± this). */
	relativeDeviation: number;
	basis: 'nominal ±1 %' | 'measurement uncertainty';
	/** Where the sharp image moves relative to the target plane, mm, for +dev and −dev. */
	imageShiftMm: [number | null, number | null];
	/** Magnification at the target plane's best image, for +dev and −dev. */
	magnification: [number | null, number | null];
}

export interface SolveStats {
	partsConsidered: number;
	elementsConsidered: number;
	/** Oriented elements' singles and ordered pairs looked at. */
	configurationsEvaluated: number;
	/** Roots the optics core's kernel wrote; the prefilter skips the kernel for pairs whose roots are clearly non-physical or cannot enter the top-K, so this counts only those. */
	rootsFound: number;
	/** Of those, roots that passed the physical filter. */
	physicalRoots: number;
	traced: number;
	elapsedMs: number;
	searchMs: number;
	/** The search stopped at its time budget before covering every pair. */
	truncated: boolean;
	workers: number;
	partsSkipped: { sku: string; reason: string }[];
}

export interface SolveResponse {
	request: SolveRequest;
	solutions: Solution[];
	stats: SolveStats;
}
