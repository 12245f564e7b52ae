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

