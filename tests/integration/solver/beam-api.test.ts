/**
 * Modes beam and afocal through the built app against the demo stock in MariaDB: answers with
 * their figures, 400s that name the field, a question without an answer (reason and nearest miss),
 * saving a beam setup (the server re-evaluates the choice and refuses a doctored one), reserving
 * it, and the purchase suggestion for a beam question.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray } from 'drizzle-orm';
import { testDb } from '../../support/env';
import { api, cookieFor } from '../accounts/helpers';
import * as t from '../../../src/lib/server/db/schema';
import { changeStock } from '../../../src/lib/server/stock/version';

const { db, pool } = testDb();
const reservedSetups: number[] = [];
afterAll(async () => {
	if (reservedSetups.length) {
		await changeStock(db, async (tx) => {
			await tx.update(t.reservations).set({ status: 'released' }).where(and(eq(t.reservations.status, 'active'), inArray(t.reservations.setupId, reservedSetups)));
		});
	}
	await pool.end();
});

let engineer: string;
beforeAll(async () => {
	engineer = await cookieFor('engineer@tarnwell.example');
});

/** A focusing question on the demo stock (light 1064 nm; a 2 mm beam into a 0.1 mm waist 250 mm on). */
const focus = {
	mode: 'beam',
	wavelengthNm: 1064,
	input: { waistDiameterMm: 2, waistPositionMm: -100, mSquared: 1 },
	target: { waistDiameterMm: 0.1, waistPositionMm: 250 },
	maxElements: 2,
	minGapMm: 1,
	minWorkingDistanceMm: 5,
	minClearance: 1.5,
	powerW: 0.2,
	limit: 5
};

describe('POST /api/v1/solve, mode beam', () => {
	it('answers with ranked answers and the contract figures: output waist, efficiency, beam at each part, ±1 mm drop, focus and irradiance', async () => {
		const res = await api('POST', '/api/v1/solve', { cookie: engineer }, focus);
		expect(res.status).toBe(200);
		const body = await res.json();
		expect(body.request.mode).toBe('beam');
		expect(body.solutions.length).toBeGreaterThan(0);
		for (const [k, s] of body.solutions.entries()) {
			expect(s.mode).toBe('beam');
			expect(s.rank).toBe(k + 1);
			expect(s.beam.efficiency).toBeGreaterThanOrEqual(0.8);
			expect(s.beam.efficiency).toBeLessThanOrEqual(1 + 1e-9);
			expect(s.elements[0].firstVertexMm).toBeGreaterThanOrEqual(0);
			expect(s.backDistanceMm).toBeGreaterThanOrEqual(5 - 1e-9);
			expect(s.beam.minClearance).toBeGreaterThanOrEqual(1.5 * (1 - 1e-9));
			expect(s.beam.parts).toHaveLength(s.elements.length);
			for (const p of s.beam.parts) {
				expect(p.fillRatio).toBeCloseTo(p.beamDiameterMm / p.clearApertureMm, 12);
				expect(p.efficiencyAtShift).toHaveLength(2);
			}
			// Peak irradiance 2P/(πw0²) in W/cm² at the output waist (w0 in cm).
			const w = s.beam.outputWaistDiameterMm / 20;
			expect(s.beam.peakIrradianceWPerCm2).toBeCloseTo((2 * 0.2) / (Math.PI * w * w), 0);
			expect(s.beam.waists.at(-1).kind).toBe('output');
			expect(s.beam.waists.at(-1).zMm).toBeCloseTo(s.beam.outputWaistPositionMm, 9);
			expect(s.beam.envelope.length).toBeGreaterThan(100);
		}
		expect(body.noAnswer).toBeNull();
	});

	it('refuses invalid fields with 400 naming each: waist ≤ 0, M² < 1, an unreachable target, an unknown mode', async () => {
		const cases: [Record<string, unknown>, string][] = [
			[{ ...focus, input: { waistDiameterMm: 0, waistPositionMm: -100 } }, 'input.waistDiameterMm'],
			[{ ...focus, input: { waistDiameterMm: 2, waistPositionMm: -100, mSquared: 0.8 } }, 'input.mSquared'],
			[{ ...focus, target: { waistDiameterMm: 0.1, waistPositionMm: 2 } }, 'target.waistPositionMm'],
			[{ ...focus, target: { waistDiameterMm: 0.0004, waistPositionMm: 250 } }, 'target.waistDiameterMm'],
			[{ ...focus, mode: 'laser' }, 'mode']
		];
		for (const [body, field] of cases) {
			const res = await api('POST', '/api/v1/solve', { cookie: engineer }, body);
			expect(res.status, field).toBe(400);
			expect((await res.json()).error.fields[field], field).toBeDefined();
		}
	});

	it('a question without an answer says why and shows the nearest miss with its figures', async () => {
		const res = await api('POST', '/api/v1/solve', { cookie: engineer }, { ...focus, maxElements: 1, target: { waistDiameterMm: 0.004, waistPositionMm: 250 } });
		expect(res.status).toBe(200);
		const body = await res.json();
		expect(body.solutions).toEqual([]);
		expect(body.noAnswer.reason).toMatch(/efficiency/);
		expect(body.noAnswer.hint).toMatch(/The nearest answer reaches \d+(\.\d)? % efficiency; .*would help/);
		expect(body.noAnswer.nearMiss.beam.efficiency).toBeLessThan(0.8);
	});
});

describe('POST /api/v1/solve, mode afocal', () => {
	it('answers a 3× expander question from the demo stock, or says why not; answers are afocal with the asked expansion and length', async () => {
		const res = await api('POST', '/api/v1/solve', { cookie: engineer }, { mode: 'afocal', wavelengthNm: 632.8, expansion: 3, expansionTolerance: 0.1, inputBeamDiameterMm: 1, maxLengthMm: 400, limit: 5 });
		expect(res.status).toBe(200);
		const body = await res.json();
		if (!body.solutions.length) expect(body.noAnswer.reason).toMatch(/pair/);
		for (const s of body.solutions) {
			expect(s.mode).toBe('afocal');
			expect(Math.abs(s.afocal.systemMatrix.C)).toBeLessThan(1e-12);
			expect(Math.abs(s.afocal.expansion / 3 - 1)).toBeLessThanOrEqual(0.1);
			expect(s.afocal.lengthMm).toBeLessThanOrEqual(400);
			expect(s.elements[0].firstVertexMm).toBe(0);
		}
	});
	it('names a missing input beam diameter', async () => {
		const res = await api('POST', '/api/v1/solve', { cookie: engineer }, { mode: 'afocal', wavelengthNm: 632.8, expansion: 3, maxLengthMm: 400 });
		expect(res.status).toBe(400);
		expect((await res.json()).error.fields.inputBeamDiameterMm).toBeDefined();
	});
});

describe('beam setups', () => {
	it('saves a beam answer re-evaluated by the server, refuses a doctored choice, and reserves it', async () => {
		const body = await (await api('POST', '/api/v1/solve', { cookie: engineer }, focus)).json();
		const s = body.solutions[0];
		const choice = { elements: s.elements.map((e: { partId: number; reversed: boolean }) => ({ partId: e.partId, reversed: e.reversed })), objectDistanceMm: s.objectDistanceMm, gapsMm: s.gapsMm, backDistanceMm: s.backDistanceMm };
		const res = await api('POST', '/api/v1/setups', { cookie: engineer }, { name: 'Beam focus check', query: body.request, choice });
		expect(res.status).toBe(201);
		const setup = await res.json();
		reservedSetups.push(setup.id);
		expect(setup.query.mode).toBe('beam');
		expect(setup.solution.mode).toBe('beam');
		expect(setup.solution.beam.efficiency).toBeCloseTo(s.beam.efficiency, 9);
		// Moving the first part by 20 mm (and the rest with it) no longer reaches the efficiency asked.
		const shifted = { ...choice, objectDistanceMm: choice.objectDistanceMm + 20, backDistanceMm: choice.backDistanceMm - 20 };
		const bad = await api('POST', '/api/v1/setups', { cookie: engineer }, { name: 'Doctored', query: body.request, choice: shifted });
		expect(bad.status).toBe(400);
		expect((await bad.json()).error.fields.choice).toBeDefined();
		const until = new Date(Date.now() + 3 * 86_400_000).toISOString();
		const r = await api('POST', `/api/v1/setups/${setup.id}/reservations`, { cookie: engineer }, { until });
		expect(r.status).toBe(201);
	});

	it('the purchase suggestion answers a beam question', async () => {
		const res = await api('POST', '/api/v1/reorder/unlock', { cookie: engineer }, { question: focus });
		expect(res.status).toBe(200);
		const body = await res.json();
		expect(body.stats.solutionsSearched).toBeGreaterThan(0);
		if (body.bestFromStock) expect(body.bestFromStock.mode).toBe('beam');
	});
});
