/**
 * Types of Build from stock shared by the server (solver, API) and the pages (table, layout
 * drawing, build sheet). Lengths in mm, wavelengths in nm; positions along the axis are
 * measured from the object plane (z = 0), light travels towards +z.
 */

import type { ParsedAfocalRequest, ParsedBeamRequest, ParsedImagingRequest } from './request';

/** The imaging question, as validated by `imagingRequestSchema` (server). */
export interface SolveRequest {
	mode: 'imaging';
	/** Working wavelength, nm. */
	wavelengthNm: number;
	/** Object plane to target plane, mm. */
	trackMm: number;
	/** An answer may use any track within trackMm ± this, mm (0: exactly trackMm). */
	trackToleranceMm: number;
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
	/** Leave out parts whose coating band does not cover the wavelength (else they are used, with a warning). */
	inCoatingBandOnly: boolean;
	/** Restrict the search to these parts (a kit). */
	partIds?: number[];
	/** Restrict the search to parts with usable stock in these locations (a drawer). */
	locationIds?: number[];
	/** How many solutions to return. */
	limit: number;
	/** Rank by the figures at the working wavelength ('monochromatic', the default) or over the colour band ('band'). */
	rankBy: 'monochromatic' | 'band';
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

/**
 * Something an answer does that its figures do not show: today a part used outside its coating band
 * (`code` 'coating-out-of-band'; the message says "coating"). Such answers rank after in-band ones.
 */
export interface SolutionWarning {
	code: 'coating-out-of-band';
	partId: number;
	sku: string;
	message: string;
}

/** A traced ray for the drawing: polyline points (z, y) from the object plane. */
export interface RayPath {
	kind: 'marginal' | 'chief' | 'edge-rim' | 'principal';
	points: [number, number][];
}

/** One answer of the imaging solver. */
export interface Solution {
	/** Absent in setups saved before the beam modes existed. */
	mode?: 'imaging';
	/** Rank, 1 = best. */
	rank: number;
	elements: SolutionElement[];
	/** Object plane to the first vertex, mm (front working distance). */
	objectDistanceMm: number;
	/** Vertex gaps between consecutive parts, mm. */
	gapsMm: number[];
	/** Last vertex to the target plane, mm (back working distance). */
	backDistanceMm: number;
	/** Object plane to target plane of this answer, mm: the track asked, or one within its tolerance. */
	trackMm: number;
	/** This answer's track minus the track asked, mm (within ± the track tolerance; absent in setups saved before it existed). */
	trackOffsetMm?: number;
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
		/**
		 * RMS spot radius of the axial point at the target plane, mm, about the centroid (in two
		 * dimensions; on axis the centroid is the axis): rays of the cone the aperture stop passes
		 * (null: not traced).
		 */
		axialRmsMm: number | null;
		/**
		 * RMS spot radius of the field edge at the target plane, mm: the same statistic (radius about
		 * the centroid, two dimensions) from a pupil grid of skew rays; rays lost at an aperture are
		 * left out (null: not traced, or no ray of the field edge arrives).
		 */
		edgeRmsMm: number | null;
		/** The statistic of both figures (absent in setups saved before it was stated). */
		statistic?: 'rms-radius-about-centroid';
		/** Airy radius 1.22·λ·N' at the working f-number of the cone the stop passes, mm. */
		airyRadiusMm: number;
		/** max(axial, edge) RMS over the Airy radius (null: not traced). */
		ratioToAiry: number | null;
		/** Why there is no trace (black-box part), else null. */
		untracedReason: string | null;
		/** Third-order estimate of the screen, mm. */
		screenEstimateMm: number;
	};
	vignetting: {
		/** Part of the requested cone lost on axis (more than the tolerance): the NA asked for is not delivered. */
		axial: boolean;
		/** Part of the requested cone lost at the field edge (more than the tolerance). */
		edge: boolean;
		/** Largest height of the requested rays (traced through the apertures) over the semi-aperture across all surfaces (> 1: clipped); a ray that misses a sphere altogether is not counted. */
		worstFill: number;
		/** Fraction of the requested cone (the question's NA) lost on axis, 0–1 (null: not traced). Absent in older saved setups. */
		axialLostFraction?: number | null;
		/** Fraction of the requested cone lost at the field edge, 0–1 (null: not traced; 0 without a field). */
		edgeLostFraction?: number | null;
		/** The field edge passes less than half the light the axis passes: it is not imaged (ranked last, no spot band shown). */
		edgeBlocked?: boolean;
		/** Object-side NA of the axial cone actually traced: the requested NA, or less where the stop cuts it (null: not traced). */
		tracedNA?: number | null;
		/** The aperture stop: the surface that limits the axial cone (part index, surface 1-based in the part's orientation here); null when none does or not traced. */
		stop?: { partIndex: number; surface: number } | null;
	};
	/** Figures over a wavelength band (absent in setups saved before they existed). */
	colour?: ColourFigures;
	/** Drawing data: rays traced for real and the paraxial construction rays. */
	rays: RayPath[];
	/** Tolerance view: what each part's EFL error does. */
	tolerance: ToleranceRow[];
	/** Warnings (a part outside its coating band); absent in setups saved before they existed. */
	warnings?: SolutionWarning[];
}

/** Figures of one answer over a wavelength band, at the target plane of the working wavelength. */
export interface ColourFigures {
	/** [shortest, centre, longest] wavelength, nm: F–d–C (486.1, 587.6, 656.3) when the working wavelength lies in it, else that band scaled around the working wavelength. */
	bandNm: [number, number, number];
	/** Axial colour: paraxial image position at the longest minus at the shortest wavelength, mm (+: the long end focuses farther; null: no index at a band end). */
	axialColourMm: number | null;
	/** RMS radius about the common centroid of the axial point, all band wavelengths with equal weight, mm. */
	axialRmsMm: number | null;
	/** The same at the field edge (pupil grid of skew rays), mm. */
	edgeRmsMm: number | null;
	/** Airy radius at the band's centre wavelength, mm. */
	airyRadiusMm: number;
	/** max(axial, edge) band RMS over that Airy radius (null: not traced). */
	ratioToAiry: number | null;
	/** Why figures are missing (no index at a band end, a part without surfaces), else null. */
	note: string | null;
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

/**
 * A long search's progress, streamed by `POST /api/v1/solve` when the client accepts `application/x-ndjson`:
 * the fraction searched (0–1) and the parts of the best candidate found so far (by the search's own key, before
 * the final real-ray check; `efficiency` in the beam mode).
 */
export interface SolveProgress {
	fraction: number;
	/** Imaging: 'screening' while the first pass finds good answers, 'proving' while the bounding passes check that none better exists. */
	stage?: 'screening' | 'proving';
	best: { parts: string[]; efficiency?: number } | null;
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
	/**
	 * Imaging: the answers are the best N by the ranking among every physical root (each root that
	 * could rank among them was traced); false when the time budget cut the search or the tracing short.
	 */
	provenBest?: boolean;
	/** Imaging: of searchMs, the bounding passes (the proof), ms. */
	provingMs?: number;
	/** Imaging, streamed only: these are the screening pass's answers, sent while the proof still runs (the result follows). */
	provisional?: boolean;
	workers: number;
	/**
	 * Parts left out of this question and why, one entry per reason: no refractive index at the
	 * wavelength (the material's formula does not reach it), no model at all, or outside its coating
	 * band when the question asked to leave those out. `skus`: up to 5 of them, to look one up.
	 */
	partsExcluded: PartsExcluded[];
}

/** One reason parts were left out of a question, and how many. */
export interface PartsExcluded {
	reason: string;
	count: number;
	skus: string[];
}

/** A part (or pair) that would answer an imaging question at another track, for an empty answer. */
export interface NearTrack {
	/** The parts, in the order light meets them. */
	skus: string[];
	/** Plain words for them: "the f = 100 mm part TW-A1-03". */
	label: string;
	/** The track at which they image at the magnification asked, mm. */
	trackMm: number;
	/** That track minus the track asked, mm. */
	trackOffsetMm: number;
	/** Object plane to first vertex and last vertex to target plane there, mm. */
	objectDistanceMm: number;
	backDistanceMm: number;
	/** Magnification there (the one asked, from the full matrix). */
	magnification: number;
}

/** The answer to an imaging question. */
export interface SolveResponse {
	request: SolveRequest;
	solutions: Solution[];
	/** Set when `solutions` is empty: why, and the nearest answers at other tracks with their figures. */
	noAnswer?: (NoAnswer & { nearTracks: NearTrack[] }) | null;
	stats: SolveStats;
}

/*
 * Mode `beam` and mode `afocal`. Positions: mode beam measures from the bench's reference plane
 * z = 0 (light towards +z; the input waist may lie before it); mode afocal from the first part's
 * first vertex. Diameters are full 1/e² intensity diameters.
 */

/** A waist of the beam along the bench (for the drawing and the caution). */
export interface BeamWaist {
	/** Where: 'input', 'intermediate' (a real focus between two parts) or 'output'. */
	kind: 'input' | 'intermediate' | 'output';
	/** Position along the axis, mm (mode beam: from z = 0). */
	zMm: number;
	/** 1/e² diameter of the (real, M²-scaled) beam at the waist, mm. */
	diameterMm: number;
	/** Rayleigh range, mm. */
	rayleighRangeMm: number;
}

/** What the beam does at one part of an answer. */
export interface BeamAtPart {
	partIndex: number;
	sku: string;
	/** Largest 1/e² beam diameter at the part's vertices, mm. */
	beamDiameterMm: number;
	/** Clear aperture in use, mm. */
	clearApertureMm: number;
	/** Clear aperture over beam diameter (the clearance; ≥ the question's minClearance). */
	clearance: number;
	/** Beam diameter over clear aperture (1/clearance). */
	fillRatio: number;
	/** Mode beam: efficiency when this part alone moves −1 mm and +1 mm along the axis. */
	efficiencyAtShift?: [number, number];
	/** Mode beam: how much the efficiency drops for ±1 mm of this part (the larger drop), 0–1. */
	efficiencyDropPerMm?: number;
}

/** The envelope ±w(z) of the beam for the to-scale drawing: samples (z, 1/e² radius), mm. */
export type BeamEnvelope = [number, number][];

/** Mode beam's figures of one answer (the contract's `beam` object). */
export interface BeamFigures {
	/** 1/e² diameter of the output waist, mm. */
	outputWaistDiameterMm: number;
	/** Position of the output waist (the focus), mm from z = 0. */
	outputWaistPositionMm: number;
	/** Overlap with the target beam, 0–1 (for M² = 1: the power coupled into the target mode). */
	efficiency: number;
	/** Smallest clearance (clear aperture over beam diameter) over the parts. */
	minClearance: number;
	/** First vertex of the first part to the last vertex of the last, mm. */
	lengthMm: number;
	/** Target asked (the fibre's mode field when a fibre was given), mm. */
	targetWaistDiameterMm: number;
	targetWaistPositionMm: number;
	/** Output waist minus target position, mm. */
	waistOffsetMm: number;
	/** Output Rayleigh range, mm. */
	outputRayleighRangeMm: number;
	/** Far-field full-angle divergence of the output beam, mrad (2·M²λ/(πw₀)). */
	outputDivergenceMrad: number;
	/** Peak irradiance at the output waist, 2P/(πw₀²), in W/cm² (null when no power was given). */
	peakIrradianceWPerCm2: number | null;
	/** Every waist of the beam in order: input, real foci between the parts, output. */
	waists: BeamWaist[];
	/** Per part, in the order light meets them. */
	parts: BeamAtPart[];
	/** Input waist plane → output waist plane ray transfer matrix (thick elements, at the wavelength). */
	systemMatrix: { A: number; B: number; C: number; D: number };
	/** Samples of the envelope from the input waist (or z = 0) to past the output waist. */
	envelope: BeamEnvelope;
}

/** One answer of mode `beam`. Element `firstVertexMm` is measured from z = 0. */
export interface BeamSolution {
	mode: 'beam';
	/** Rank, 1 = best. */
	rank: number;
	elements: SolutionElement[];
	/** z = 0 to the first vertex, mm (where the first part stands). */
	objectDistanceMm: number;
	/** Vertex gaps between consecutive parts, mm. */
	gapsMm: number[];
	/** Last vertex to the target waist position, mm. */
	backDistanceMm: number;
	beam: BeamFigures;
	warnings?: SolutionWarning[];
}

/** Mode afocal's figures of one answer (the contract's `afocal` object). */
export interface AfocalFigures {
	/** Output over input beam diameter, from the thick matrices at the wavelength (|A| of the afocal pair). */
	expansion: number;
	/** First vertex of the first part to the last vertex of the second, mm. */
	lengthMm: number;
	/** The output beam is turned upside down (a real focus between the parts). */
	inverted: boolean;
	/** Angle of the real ray at the input beam's full 1/e² radius after the pair, mrad (null: a part without surfaces, not traced). */
	residualDivergenceMrad: number | null;
	/** Position of the real focus between the parts, mm from the first vertex (null: none). */
	intermediateFocusMm: number | null;
	/** Vertex gap that makes the pair afocal at the wavelength, mm. */
	gapMm: number;
	/** Output beam 1/e² diameter, mm. */
	outputBeamDiameterMm: number;
	/** Smallest clear aperture over beam diameter over the two parts. */
	minClearance: number;
	parts: BeamAtPart[];
	/** Pair ray transfer matrix (first to last vertex). */
	systemMatrix: { A: number; B: number; C: number; D: number };
	/** The traced marginal ray for the drawing (z from the first vertex, y), when traced. */
	marginalRay: [number, number][] | null;
}

/** One answer of mode `afocal`. Element `firstVertexMm` is measured from the first part's first vertex (0 for it). */
export interface AfocalSolution {
	mode: 'afocal';
	rank: number;
	elements: SolutionElement[];
	/** Always 0 (positions start at the first vertex). */
	objectDistanceMm: number;
	/** The one vertex gap, mm. */
	gapsMm: number[];
	/** Always 0. */
	backDistanceMm: number;
	afocal: AfocalFigures;
	warnings?: SolutionWarning[];
}

/** An answer of any mode. */
export type AnySolution = Solution | BeamSolution | AfocalSolution;

/** Why a beam or afocal question has no answer, with the nearest miss. */
export interface NoAnswer {
	/** A sentence: why nothing qualifies. */
	reason: string;
	/** What would help (a shorter focal length, a longer maximum length, ...), or null. */
	hint: string | null;
}

/** The answer to a mode-beam question. `nearMiss` is set when `solutions` is empty and something came close. */
export interface BeamSolveResponse {
	request: ParsedBeamRequest;
	solutions: BeamSolution[];
	noAnswer: (NoAnswer & { nearMiss: BeamSolution | null }) | null;
	stats: SolveStats;
}

/** The answer to a mode-afocal question. */
export interface AfocalSolveResponse {
	request: ParsedAfocalRequest;
	solutions: AfocalSolution[];
	noAnswer: (NoAnswer & { nearMiss: AfocalSolution | null }) | null;
	stats: SolveStats;
}

/** The answer to any question (discriminate on `request.mode`). */
export type AnySolveResponse = (SolveResponse & { request: ParsedImagingRequest }) | BeamSolveResponse | AfocalSolveResponse;

