/**
 * "Which one purchase would give the best setup?", answered with the solver: the question is
 * searched over the whole catalogue (availableOnly: false), and the best-ranked solution that
 * needs exactly one part beyond what is available is reported with that part's price, supplier
 * and lead time. For a saved setup, the same search runs on its saved question; the setup's own
 * solution also says directly which part it is short of.
 */
import { eq, inArray } from 'drizzle-orm';
import { z } from 'zod';
import type { DbOrTx } from '$lib/server/db';
import { parts, suppliers } from '$lib/server/db/schema';
import * as solver from '$lib/server/solver/service';
import { stockView } from '$lib/server/solver/load-stock';
import { getSetup, type SetupView } from '$lib/server/solver/setups';
import { totalsFor } from '$lib/server/stock/availability';
import type { AnySolution } from '$lib/solver/types';
import { bestSinglePurchase, shortfalls, unitsNeeded, type Shortfall } from './unlocks';
import { toMajor } from '$lib/money';

/** Solutions the search returns for the unlock (the solver's own upper limit). */
const SEARCH_LIMIT = 50;

export const unlockInputSchema = z.union([
	z.object({ setupId: z.number({ error: 'Give a setup id.' }).int().positive() }).strict(),
	z.object({ question: z.record(z.string(), z.unknown()) }).strict()
]);

export interface PurchaseOffer {
	partId: number;
	sku: string;
	name: string;
	/** Units to buy. */
	quantity: number;
	/** Currency units (38.5). */
	unitPrice: number | null;
	currency: string;
	supplier: string | null;
	leadTimeDays: number | null;
}

export interface SolutionBrief {
	/** The question the solution answers (imaging, a laser beam, or a beam expander). */
	mode: 'imaging' | 'beam' | 'afocal';
	rank: number;
	skus: string[];
	/** Part ids in the order light meets them (a part used twice appears twice). */
	partIds: number[];
	/** Imaging: the magnification (null for the beam questions). */
	magnification: number | null;
	/** Imaging: max(axial, edge) RMS spot over the Airy radius (null: not traced, or a beam question). */
	ratioToAiry: number | null;
	/** Imaging: max(axial, edge) RMS spot radius at the target plane, mm (null: not traced, or a beam question). */
	spotRmsMm: number | null;
	/** Imaging: Airy radius at the working f-number, mm (null for the beam questions). */
	airyRadiusMm: number | null;
	/** Object plane (beam: z = 0; afocal: 0) to the first vertex, mm. */
	objectDistanceMm: number;
	/** Last vertex to the target plane (beam: the target waist; afocal: 0), mm. */
	backDistanceMm: number;
	vignetted: boolean;
	/** Beam: overlap with the target beam, 0–1 (null otherwise). */
	efficiency: number | null;
	/** Beam: output waist 1/e² diameter and position from z = 0, mm (null otherwise). */
	outputWaistDiameterMm: number | null;
	outputWaistPositionMm: number | null;
	/** Afocal: expansion and residual divergence in mrad (null otherwise, or not traced). */
	expansion: number | null;
	residualDivergenceMrad: number | null;
	/** Beam and afocal: first vertex to last vertex, mm (null for imaging). */
	lengthMm: number | null;
}

/** A part a saved setup needs more of than is available to it now. */
export interface SetupShortPart extends PurchaseOffer {
	/** Units the setup's solution uses. */
	needed: number;
	/** Units available to this setup: available stock plus units its own active reservations hold. */
	available: number;
}

export interface UnlockAnswer {
	/** The best solution buildable from available stock now, or null. */
	bestFromStock: SolutionBrief | null;
	/** The best solution one purchase would unlock, with the purchase; null when none needs exactly one. */
	purchase: (PurchaseOffer & { solution: SolutionBrief; betterThanStock: boolean }) | null;
	/** For a saved setup: the setup can be built from available stock now. */
	setupBuildable?: boolean;
	/** For a saved setup: what its own saved solution is short of. */
	setupShort?: SetupShortPart[];
	stats: { solutionsSearched: number; elapsedMs: number };
}

/** What the pages and the API show of a solution of any question. */
function brief(s: AnySolution): SolutionBrief {
	const base = { rank: s.rank, skus: s.elements.map((e) => e.sku), partIds: s.elements.map((e) => e.partId), objectDistanceMm: s.objectDistanceMm, backDistanceMm: s.backDistanceMm };
	const none = { magnification: null, ratioToAiry: null, spotRmsMm: null, airyRadiusMm: null, efficiency: null, outputWaistDiameterMm: null, outputWaistPositionMm: null, expansion: null, residualDivergenceMrad: null, lengthMm: null };
	if (s.mode === 'beam') {
		const b = s.beam;
		return { ...base, ...none, mode: 'beam', vignetted: false, efficiency: b.efficiency, outputWaistDiameterMm: b.outputWaistDiameterMm, outputWaistPositionMm: b.outputWaistPositionMm, lengthMm: b.lengthMm };
	}
	if (s.mode === 'afocal') {
		const a = s.afocal;
		return { ...base, ...none, mode: 'afocal', vignetted: false, expansion: a.expansion, residualDivergenceMrad: a.residualDivergenceMrad, lengthMm: a.lengthMm };
	}
	return {
		...base,
		...none,
		mode: 'imaging',
		magnification: s.magnification,
		ratioToAiry: s.spot.ratioToAiry,
		spotRmsMm: s.spot.axialRmsMm === null && s.spot.edgeRmsMm === null ? null : Math.max(s.spot.axialRmsMm ?? 0, s.spot.edgeRmsMm ?? 0),
		airyRadiusMm: s.spot.airyRadiusMm,
		vignetted: s.vignetting.axial || s.vignetting.edge
	};
}

async function offers(db: DbOrTx, short: readonly Shortfall[]): Promise<PurchaseOffer[]> {
	if (!short.length) return [];
	const rows = await db
		.select({ p: parts, supplier: suppliers.name })
		.from(parts)
		.leftJoin(suppliers, eq(suppliers.id, parts.supplierId))
		.where(inArray(
			parts.id,
			short.map((s) => s.partId)
		));
	const byId = new Map(rows.map((r) => [r.p.id, r]));
	return short.flatMap((s) => {
		const r = byId.get(s.partId);
		if (!r) return [];
		return [{ partId: s.partId, sku: r.p.sku, name: r.p.name, quantity: s.missing, unitPrice: toMajor(r.p.unitPriceMinor), currency: r.p.currency, supplier: r.supplier, leadTimeDays: r.p.leadTimeDays }];
	});
}

/**
 * Runs the search for `question` over the catalogue and picks the best single purchase. `held`: units
 * that count as available on top of stock (a saved setup's own active reservations, kept for it).
 */
export async function unlockForQuestion(
	db: DbOrTx,
	question: Record<string, unknown>,
	user: { id: number },
	signal?: AbortSignal,
	held: ReadonlyMap<number, number> = new Map()
): Promise<UnlockAnswer> {
	const res = await solver.solve(db, { ...question, availableOnly: false, limit: SEARCH_LIMIT }, user, signal);
	const view = await stockView(db);
	const available = new Map(view.parts.map((p) => [p.partId, p.available]));
	const avail = (id: number) => (available.get(id) ?? 0) + (held.get(id) ?? 0);
	const solutions: readonly AnySolution[] = res.solutions;
	const fromStock = solutions.find((s) => shortfalls(s.elements, avail).length === 0) ?? null;
	const best = bestSinglePurchase(solutions, avail);
	let purchase: UnlockAnswer['purchase'] = null;
	if (best) {
		const [offer] = await offers(db, [best.purchase]);
		if (offer) purchase = { ...offer, solution: brief(best.solution), betterThanStock: !fromStock || best.solution.rank < fromStock.rank };
	}
	return { bestFromStock: fromStock ? brief(fromStock) : null, purchase, stats: { solutionsSearched: res.solutions.length, elapsedMs: res.stats.elapsedMs } };
}

/**
 * What a saved setup is short of now: per part of its saved solution, the units it uses against
 * the units available to it (available stock plus what the setup's own active reservations
 * hold, since those units are kept for it). Empty when it can be built from stock now.
 */
export async function setupShortfall(db: DbOrTx, setup: Pick<SetupView, 'solution' | 'reservations'>): Promise<SetupShortPart[]> {
	const ids = [...new Set(setup.solution.elements.map((e) => e.partId))];
	const [totals, archived] = await Promise.all([
		totalsFor(db, ids),
		ids.length ? db.select({ id: parts.id, archivedAt: parts.archivedAt }).from(parts).where(inArray(parts.id, ids)) : []
	]);
	const gone = new Set(archived.filter((p) => p.archivedAt).map((p) => p.id));
	const held = heldBy(setup);
	const availableTo = (id: number) => (gone.has(id) ? 0 : (totals.get(id)?.available ?? 0) + (held.get(id) ?? 0));
	const short = shortfalls(setup.solution.elements, availableTo);
	const need = unitsNeeded(setup.solution.elements);
	const byId = new Map((await offers(db, short)).map((o) => [o.partId, o]));
	return short.flatMap((s) => {
		const o = byId.get(s.partId);
		return o ? [{ ...o, needed: need.get(s.partId) ?? 0, available: availableTo(s.partId) }] : [];
	});
}

/** Units the setup's own active reservations hold, by part. */
function heldBy(setup: Pick<SetupView, 'reservations'>): Map<number, number> {
	const held = new Map<number, number>();
	for (const r of setup.reservations) if (r.state === 'active') held.set(r.partId, (held.get(r.partId) ?? 0) + r.quantity);
	return held;
}

/**
 * The unlock of a saved setup: its own shortfall, and the solver's best single purchase for its
 * question, both with the units its own reservations hold counted as available to it.
 */
export async function unlockForSetup(db: DbOrTx, setupId: number, user: { id: number }, signal?: AbortSignal): Promise<UnlockAnswer> {
	const setup = await getSetup(db, setupId);
	const short = await setupShortfall(db, setup);
	const answer = await unlockForQuestion(db, setup.query as unknown as Record<string, unknown>, user, signal, heldBy(setup));
	return { ...answer, setupBuildable: short.length === 0, setupShort: short };
}
