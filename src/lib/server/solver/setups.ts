/**
 * Setups: a solver question (any mode: imaging, beam, afocal) saved with the solution chosen, for a project. The server never
 * stores a solution a client sends: it takes the choice (which parts, which way round, where)
 * and re-evaluates it from the catalogue (matrix check, real rays, tolerance) before saving.
 * Reserving a setup reserves all its parts in one transaction (stock's `reserve`).
 */
import { and, desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { dateInput, text } from '$lib/input';
import type { DbOrTx } from '$lib/server/db';
import { inTransaction } from '$lib/server/db/transaction';
import { setups, projects, users, reservations } from '$lib/server/db/schema';
import { DomainError } from '$lib/server/errors';
import { reserve, reservationRows } from '$lib/server/stock/reservations';
import { solveRequestSchema, type ParsedAfocalRequest, type ParsedBeamRequest, type ParsedImagingRequest, type ParsedSolveRequest } from '$lib/solver/request';
import type { AfocalSolution, AnySolution, BeamSolution, Solution } from '$lib/solver/types';
import { afocalGapMm, packElements, checkPairPhysical, checkSinglePhysical, PHYS_SURFACES_TOUCH, PHYS_APERTURE, PHYS_OBJECT_PLANE, PHYS_TARGET_PLANE, type ThickElement } from '$lib/optics';
import { evaluateBeam, evaluateAfocal } from './beam-evaluate';
import { buildElementSnapshot } from './elements';
import { evaluatePlacement } from './evaluate';
import { withCoatingWarnings } from './solve';
import { candidatePartsById } from './load-stock';
import { activeReservation } from '$lib/server/stock/active-reservation';

export const choiceSchema = z
	.object({
		elements: z
			.array(z.object({ partId: z.number().int().positive(), reversed: z.boolean() }).strict())
			.min(1, 'A setup has one or two parts.')
			.max(2, 'A setup has one or two parts.'),
		objectDistanceMm: z.number().finite(),
		gapsMm: z.array(z.number().finite()).max(1),
		backDistanceMm: z.number().finite()
	})
	.strict()
	.refine((c) => c.gapsMm.length === c.elements.length - 1, { message: 'Give one gap between two parts, none for one part.', path: ['gapsMm'] });
export type Choice = z.infer<typeof choiceSchema>;

export const setupInputSchema = z
	.object({
		name: text({ error: 'Give the setup a name.' }).trim().min(1, 'Give the setup a name.').max(160, 'At most 160 characters.'),
		projectId: z.number().int().positive().nullable().optional(),
		query: solveRequestSchema,
		choice: choiceSchema
	})
	.strict();

export const reserveInputSchema = z
	.object({
		until: dateInput('Enter a date.'),
		projectId: z.number().int().positive().nullable().optional()
	})
	.strict();

const notAnswer = (message: string, field = 'choice') => new DomainError(400, 'invalid-input', message, { [field]: message });

/**
 * The glass of a chosen placement, as the solver's physical filter sees it (optics core's
 * `checkPairPhysical`): neighbouring parts keep air between them out to the smaller glass edge
 * (outer diameter), and with `planes` the outer surfaces' edges stay off the object and
 * target planes. Working distances and gaps are checked by the callers with their own words.
 */
function assertGlassApart(elements: readonly ThickElement[], objectDistanceMm: number, gapsMm: readonly number[], backDistanceMm: number, planes: boolean): void {
	const packed = packElements(elements);
	const bad =
		elements.length === 2
			? checkPairPhysical(packed, 0, 1, objectDistanceMm, gapsMm[0], backDistanceMm, -Infinity, -Infinity)
			: checkSinglePhysical(packed, 0, objectDistanceMm, backDistanceMm, -Infinity);
	if (bad & (PHYS_SURFACES_TOUCH | PHYS_APERTURE)) throw notAnswer('The two parts would touch or overlap at their glass edges (outer diameter) at this gap.');
	if (planes && bad & PHYS_OBJECT_PLANE) throw notAnswer("The first part's glass edge would reach the object plane.");
	if (planes && bad & PHYS_TARGET_PLANE) throw notAnswer("The last part's glass edge would reach the target plane.");
}

/** The chosen parts as oriented elements at the question's wavelength; 400 when a part is unknown or cannot be built. */
async function pickElements(db: DbOrTx, wavelengthNm: number, choice: Choice) {
	const byId = await candidatePartsById(db, choice.elements.map((e) => e.partId));
	const list = [...new Set(choice.elements.map((e) => e.partId))].map((id) => {
		const p = byId.get(id);
		if (!p) throw new DomainError(400, 'invalid-input', `Part ${id} is not in the catalogue (or archived).`, { choice: `Unknown part ${id}.` });
		return p;
	});
	const snap = buildElementSnapshot(list, wavelengthNm);
	if (snap.skipped.length) throw notAnswer(`${snap.skipped[0].sku}: ${snap.skipped[0].reason}`);
	return choice.elements.map((c) => {
		const pi = snap.parts.findIndex((p) => p.partId === c.partId);
		let e = -1;
		for (let k = 0; k < snap.elements.length; k++) if (snap.partIndex[k] === pi && (snap.reversed[k] === 1) === c.reversed) e = k;
		if (e < 0 && snap.symmetricPart[pi]) e = snap.partIndex.indexOf(pi);
		return { part: snap.parts[pi], element: snap.elements[e], symmetric: snap.symmetricPart[pi] };
	});
}

/** Re-evaluates a mode-beam choice: it must fit the bench, clear the beam and reach the efficiency asked. */
async function evaluateBeamChoice(db: DbOrTx, query: ParsedBeamRequest, choice: Choice): Promise<BeamSolution> {
	if (choice.elements.length > query.maxElements) throw notAnswer(`The question allows ${query.maxElements} part(s).`);
	const picked = await pickElements(db, query.wavelengthNm, choice);
	const end = choice.objectDistanceMm + choice.gapsMm.reduce((a, g) => a + g, 0) + picked.reduce((a, p) => a + p.element.thicknessMm, 0) + choice.backDistanceMm;
	if (Math.abs(end - query.target.waistPositionMm) > 1e-6 * Math.max(1, Math.abs(query.target.waistPositionMm))) throw notAnswer('Positions and thicknesses must add up to the target waist position.');
	if (choice.objectDistanceMm < -1e-9) throw notAnswer('Every part lies at z ≥ 0.');
	if (choice.gapsMm.some((g) => g < query.minGapMm - 1e-9)) throw notAnswer(`The gap must be at least ${query.minGapMm} mm.`);
	if (choice.backDistanceMm < query.minWorkingDistanceMm - 1e-9) throw notAnswer(`The last part must end at least ${query.minWorkingDistanceMm} mm before the target waist.`);
	assertGlassApart(picked.map((p) => p.element), choice.objectDistanceMm, choice.gapsMm, choice.backDistanceMm, false);
	const s = evaluateBeam(query, picked.map((p) => p.part), picked.map((p) => p.element), choice.objectDistanceMm, choice.gapsMm, picked.map((p) => p.symmetric));
	if (s.beam.minClearance < query.minClearance * (1 - 1e-9)) throw notAnswer(`A clear aperture is only ${s.beam.minClearance.toFixed(2)}× the beam there (asked: ${query.minClearance}×).`);
	if (s.beam.efficiency < query.minEfficiency) throw notAnswer(`This placement reaches ${(100 * s.beam.efficiency).toFixed(1)} % efficiency (asked: ${(100 * query.minEfficiency).toFixed(0)} %).`);
	return { rank: 1, ...withCoatingWarnings(s, picked.map((p) => p.part), query.wavelengthNm) };
}

/** Re-evaluates a mode-afocal choice: the gap must be the afocal one at the wavelength, and expansion, length and focus as asked. */
async function evaluateAfocalChoice(db: DbOrTx, query: ParsedAfocalRequest, choice: Choice): Promise<AfocalSolution> {
	if (choice.elements.length !== 2) throw notAnswer('An expander has two parts.');
	const picked = await pickElements(db, query.wavelengthNm, choice);
	const [m1, m2] = [picked[0].element.matrix, picked[1].element.matrix];
	const g = afocalGapMm(m1[0], m1[1], m1[2], m1[3], m2[0], m2[1], m2[2], m2[3]);
	if (g === null || Math.abs(g - choice.gapsMm[0]) > 1e-6 * Math.max(1, Math.abs(g))) throw notAnswer('The gap is not the afocal spacing of these parts at this wavelength.');
	if (g < query.minGapMm - 1e-9) throw notAnswer(`The gap must be at least ${query.minGapMm} mm.`);
	assertGlassApart(picked.map((p) => p.element), 1, [g], 1, false);
	const ev = evaluateAfocal(query, picked.map((p) => p.part), picked.map((p) => p.element), g, picked.map((p) => p.symmetric));
	const a = ev.solution.afocal;
	if (ev.clipped) throw notAnswer('The input beam is clipped by a clear aperture of this pair.');
	if (Math.abs(a.expansion / query.expansion - 1) > query.expansionTolerance + 1e-12) throw notAnswer(`This pair expands ${a.expansion.toFixed(3)}×, outside ${query.expansion}× ±${(100 * query.expansionTolerance).toFixed(1)} %.`);
	if (a.lengthMm > query.maxLengthMm + 1e-9) throw notAnswer(`This pair is ${a.lengthMm.toFixed(1)} mm long (at most ${query.maxLengthMm} mm asked).`);
	if (query.intermediateFocus !== undefined && (a.intermediateFocusMm !== null) !== query.intermediateFocus) throw notAnswer('This pair does not have the arrangement asked (focus between the parts or not).');
	if (a.minClearance < query.minClearance * (1 - 1e-9)) throw notAnswer(`A clear aperture is only ${a.minClearance.toFixed(2)}× the beam there (asked: ${query.minClearance}×).`);
	return { rank: 1, ...withCoatingWarnings(ev.solution, picked.map((p) => p.part), query.wavelengthNm) };
}

/** Re-evaluates a choice from the catalogue for its question's mode; 400 when it is not an answer to it. */
export async function evaluateChoice(db: DbOrTx, query: ParsedSolveRequest, choice: Choice): Promise<AnySolution> {
	if (query.mode === 'beam') return evaluateBeamChoice(db, query, choice);
	if (query.mode === 'afocal') return evaluateAfocalChoice(db, query, choice);
	return evaluateImagingChoice(db, query, choice);
}

/** Re-evaluates an imaging choice; 400 when it does not image as the question asks. */
async function evaluateImagingChoice(db: DbOrTx, query: ParsedImagingRequest, choice: Choice): Promise<Solution> {
	const byId = await candidatePartsById(db, choice.elements.map((e) => e.partId));
	const list = [...new Set(choice.elements.map((e) => e.partId))].map((id) => {
		const p = byId.get(id);
		if (!p) throw new DomainError(400, 'invalid-input', `Part ${id} is not in the catalogue (or archived).`, { choice: `Unknown part ${id}.` });
		return p;
	});
	const snap = buildElementSnapshot(list, query.wavelengthNm);
	if (snap.skipped.length) {
		throw new DomainError(400, 'invalid-input', `${snap.skipped[0].sku}: ${snap.skipped[0].reason}`, { choice: snap.skipped[0].reason });
	}
	const picked = choice.elements.map((c) => {
		const pi = snap.parts.findIndex((p) => p.partId === c.partId);
		let e = -1;
		for (let k = 0; k < snap.elements.length; k++) {
			if (snap.partIndex[k] === pi && (snap.reversed[k] === 1) === c.reversed) e = k;
		}
		if (e < 0 && snap.symmetricPart[pi]) e = snap.partIndex.indexOf(pi); // symmetric: one orientation
		return { part: snap.parts[pi], element: snap.elements[e], symmetric: snap.symmetricPart[pi] };
	});
	const track =
		choice.objectDistanceMm + choice.backDistanceMm + choice.gapsMm.reduce((a, g) => a + g, 0) + picked.reduce((a, p) => a + p.element.thicknessMm, 0);
	// Any track within the question's tolerance (0: the track asked).
	const tolerance = query.trackToleranceMm ?? 0;
	if (Math.abs(track - query.trackMm) > tolerance + 1e-6 * Math.max(1, query.trackMm)) {
		const message = tolerance > 0 ? `Positions and thicknesses must add up to the track within ±${tolerance} mm.` : 'Positions and thicknesses must add up to the track.';
		throw new DomainError(400, 'invalid-input', 'The positions do not add up to the track.', { choice: message });
	}
	if (choice.gapsMm.some((g) => g < query.minGapMm - 1e-9)) throw notAnswer(`The gap must be at least ${query.minGapMm} mm.`);
	if (Math.min(choice.objectDistanceMm, choice.backDistanceMm) < query.minWorkingDistanceMm - 1e-9) {
		throw notAnswer(`The working distances must be at least ${query.minWorkingDistanceMm} mm.`);
	}
	assertGlassApart(picked.map((p) => p.element), choice.objectDistanceMm, choice.gapsMm, choice.backDistanceMm, true);
	const ev = evaluatePlacement(
		{
			parts: picked.map((p) => p.part),
			elements: picked.map((p) => p.element),
			objectDistanceMm: choice.objectDistanceMm,
			gapsMm: choice.gapsMm,
			backDistanceMm: choice.backDistanceMm,
			targetMagnification: query.magnification,
			afocalFamily: false,
			doubleRoot: false,
			screenEstimateMm: NaN
		},
		{ ...query, trackMm: track },
		picked.map((p) => p.symmetric)
	);
	const magOk = Math.abs(ev.solution.magnification / query.magnification - 1) <= Math.max(query.magnificationTolerance, 1e-6);
	if (!ev.verified || !magOk) {
		throw new DomainError(400, 'invalid-input', 'This placement does not image the object onto the target plane at the magnification asked.', {
			choice: 'Not an imaging placement for this question.'
		});
	}
	const family = picked.length === 2 && Math.abs(ev.solution.systemMatrix.C) * track < 1e-9;
	return { rank: 1, ...withCoatingWarnings(ev.solution, picked.map((p) => p.part), query.wavelengthNm), trackOffsetMm: track - query.trackMm, afocalFamily: family, spot: { ...ev.solution.spot, screenEstimateMm: 0 } };
}

/** Saves a setup; returns its id. */
export async function createSetup(db: DbOrTx, input: unknown, user: { id: number }): Promise<{ id: number }> {
	const d = setupInputSchema.parse(input);
	if (d.projectId != null) {
		const [p] = await db.select({ id: projects.id }).from(projects).where(eq(projects.id, d.projectId));
		if (!p) throw new DomainError(400, 'invalid-input', 'No such project.', { projectId: 'No such project.' });
	}
	const solution = await evaluateChoice(db, d.query, d.choice);
	const [{ id }] = await db
		.insert(setups)
		.values({ name: d.name, userId: user.id, projectId: d.projectId ?? null, query: d.query, solution })
		.$returningId();
	return { id };
}

export interface SetupView {
	id: number;
	name: string;
	userId: number;
	userName: string;
	projectId: number | null;
	projectCode: string | null;
	projectName: string | null;
	/** The question (any mode; setups saved before the beam modes are imaging). */
	query: ParsedSolveRequest;
	solution: AnySolution;
	createdAt: string;
	reservations: Awaited<ReturnType<typeof reservationRows>>;
}

/** A setup with its active reservations; 404 when there is none. */
export async function getSetup(db: DbOrTx, id: number): Promise<SetupView> {
	const [row] = await db
		.select({ s: setups, userName: users.name, projectCode: projects.code, projectName: projects.name })
		.from(setups)
		.innerJoin(users, eq(users.id, setups.userId))
		.leftJoin(projects, eq(projects.id, setups.projectId))
		.where(eq(setups.id, id));
	if (!row) throw new DomainError(404, 'not-found', `There is no setup ${id}.`);
	const res = await db
		.select({ id: reservations.id })
		.from(reservations)
		.where(and(eq(reservations.setupId, id), activeReservation))
		.orderBy(desc(reservations.id));
	const rows = (await Promise.all(res.map((r) => reservationRows(db, { id: r.id })))).flat();
	return {
		id: row.s.id,
		name: row.s.name,
		userId: row.s.userId,
		userName: row.userName,
		projectId: row.s.projectId,
		projectCode: row.projectCode,
		projectName: row.projectName,
		query: row.s.query as ParsedSolveRequest,
		solution: row.s.solution as AnySolution,
		createdAt: row.s.createdAt.toISOString(),
		reservations: rows
	};
}

/** Recent setups (newest first). */
export async function listSetups(db: DbOrTx, limit = 20) {
	const rows = await db
		.select({ id: setups.id, name: setups.name, userName: users.name, projectCode: projects.code, createdAt: setups.createdAt })
		.from(setups)
		.innerJoin(users, eq(users.id, setups.userId))
		.leftJoin(projects, eq(projects.id, setups.projectId))
		.orderBy(desc(setups.id))
		.limit(limit);
	return rows.map((r) => ({ ...r, createdAt: r.createdAt.toISOString() }));
}

/**
 * Reserves every part of the setup in one transaction (a part used twice reserves two units).
 * Parts are locked in id order so two reservers cannot deadlock. 409 'insufficient-stock'
 * when someone took the last unit; then nothing is reserved.
 */
export async function reserveSetup(db: DbOrTx, id: number, input: unknown, user: { id: number }) {
	const d = reserveInputSchema.parse(input);
	const setup = await getSetup(db, id);
	const need = new Map<number, number>();
	for (const e of setup.solution.elements) need.set(e.partId, (need.get(e.partId) ?? 0) + 1);
	const ids = [...need.keys()].sort((a, b) => a - b);
	return inTransaction(db, async (tx) => {
		const out = [];
		for (const partId of ids) {
			out.push(
				await reserve(tx, {
					partId,
					quantity: need.get(partId)!,
					until: d.until,
					projectId: d.projectId ?? setup.projectId,
					setupId: id,
					note: `Setup "${setup.name}"`,
					userId: user.id
				})
			);
		}
		return out;
	});
}
