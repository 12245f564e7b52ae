/**
 * What the build pages say and list, against the built app and the demo stock: the saved-setups
 * list (own first, parts, reservation state, filter), every field's error at once on /build, the
 * one orientation wording, the ranking the table explains, the tolerance sign and the matrix
 * figures without rounding noise.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray } from 'drizzle-orm';
import { testDb } from '../../support/env';
import { api, cookieFor } from '../accounts/helpers';
import * as t from '../../../src/lib/server/db/schema';
import { changeStock } from '../../../src/lib/server/stock/version';
import { readForm } from '../../../src/lib/server/solver/form';
import { listSavedSetups } from '../../../src/lib/server/solver/setup-list';
import { orientationText } from '../../../src/lib/solver/orientation';
import { compareKeys, decidingStep, rankKey, spotBand } from '../../../src/lib/solver/ranking';
import { imageShiftText, matrixEntry } from '../../../src/lib/solver/format';
import type { Solution } from '../../../src/lib/solver/types';

const { db, pool } = testDb();
const created: number[] = [];
afterAll(async () => {
	if (created.length) {
		await changeStock(db, async (tx) => {
			await tx.update(t.reservations).set({ status: 'released' }).where(and(inArray(t.reservations.setupId, created), eq(t.reservations.status, 'active')));
		});
		// Setups that never held a reservation leave no trace elsewhere: remove them so other files' lists stay as they were.
		const held = new Set((await db.select({ id: t.reservations.setupId }).from(t.reservations).where(inArray(t.reservations.setupId, created))).map((r) => r.id));
		const unused = created.filter((id) => !held.has(id));
		if (unused.length) await db.delete(t.setups).where(inArray(t.setups.id, unused));
	}
	await pool.end();
});

let engineer: string, engineer2: string;
beforeAll(async () => {
	[engineer, engineer2] = await Promise.all([cookieFor('engineer@tarnwell.example'), cookieFor('engineer2@tarnwell.example')]);
});

const question = { trackMm: 300, magnification: -0.5, objectNA: 0.03, objectHeightMm: 2, minGapMm: 1, minWorkingDistanceMm: 5, limit: 10 };

async function solve(cookie: string, extra: Record<string, unknown> = {}) {
	const res = await api('POST', '/api/v1/solve', { cookie }, { ...question, ...extra });
	expect(res.status).toBe(200);
	return (await res.json()) as { request: Record<string, unknown>; solutions: Solution[] };
}

async function saveFirst(cookie: string, name: string, extra: Record<string, unknown> = {}) {
	const body = await solve(cookie, extra);
	const s = body.solutions[0];
	const choice = { elements: s.elements.map((e) => ({ partId: e.partId, reversed: e.reversed })), objectDistanceMm: s.objectDistanceMm, gapsMm: s.gapsMm, backDistanceMm: s.backDistanceMm };
	const res = await api('POST', '/api/v1/setups', { cookie }, { name, query: body.request, choice });
	expect(res.status).toBe(201);
	const setup = await res.json();
	created.push(setup.id);
	return setup as { id: number; solution: Solution };
}

const userId = async (email: string) => (await db.select({ id: t.users.id }).from(t.users).where(eq(t.users.email, email)))[0].id;

describe('saved setups list', () => {
	it('lists the asking user\'s setups first, with parts, and the reservation state once reserved', async () => {
		const stamp = Date.now().toString(36);
		const mine = await saveFirst(engineer, `List check mine ${stamp}`);
		const theirs = await saveFirst(engineer2, `List check theirs ${stamp}`);
		const me = await userId('engineer@tarnwell.example');

		const { items, total } = await listSavedSetups(db, { userId: me, limit: 500 });
		expect(total).toBeGreaterThanOrEqual(2);
		const firstOther = items.findIndex((r) => !r.mine);
		const lastMine = items.map((r) => r.mine).lastIndexOf(true);
		expect(lastMine).toBeLessThan(firstOther === -1 ? Infinity : firstOther);
		const row = items.find((r) => r.id === mine.id)!;
		expect(row.skus).toEqual(mine.solution.elements.map((e) => e.sku));
		expect(row.trackMm).toBe(300);
		expect(row.magnification).toBe(-0.5);
		expect(row.reserved).toBeNull();
		const other = items.find((r) => r.id === theirs.id)!;
		expect(other.mine).toBe(false);
		expect(other.userName.length).toBeGreaterThan(0);

		// Reserve my setup: the list says how many of its parts are held and until when.
		const until = new Date(Date.now() + 5 * 86_400_000);
		const res = await api('POST', `/api/v1/setups/${mine.id}/reservations`, { cookie: engineer }, { until: until.toISOString() });
		expect(res.status, await res.clone().text()).toBe(201);
		const after = (await listSavedSetups(db, { userId: me, limit: 500 })).items.find((r) => r.id === mine.id)!;
		expect(after.reserved).toMatchObject({ units: mine.solution.elements.length, partsNeeded: mine.solution.elements.length });
		expect(Math.abs(new Date(after.reserved!.until).getTime() - until.getTime())).toBeLessThan(1000);

		// Name filter and "mine only".
		const filtered = await listSavedSetups(db, { userId: me, limit: 50, q: `List check theirs ${stamp}` });
		expect(filtered.items.map((r) => r.id)).toEqual([theirs.id]);
		const onlyMine = await listSavedSetups(db, { userId: me, limit: 500, mineOnly: true });
		expect(onlyMine.items.every((r) => r.mine)).toBe(true);
		expect(onlyMine.items.map((r) => r.id)).toContain(mine.id);
		// A LIKE wildcard in the filter is taken literally.
		expect((await listSavedSetups(db, { userId: me, limit: 50, q: '%' })).items.filter((r) => !r.name.includes('%'))).toEqual([]);
	});

	it('links every listed setup from /build and from /build/setups', async () => {
		const setup = await saveFirst(engineer, `Linked setup ${Date.now().toString(36)}`);
		const page = await (await api('GET', '/build', { cookie: engineer })).text();
		expect(page).toContain(`href="/build/${setup.id}"`);
		expect(page).toContain('href="/build/setups"');
		const all = await api('GET', `/build/setups?q=${encodeURIComponent('Linked setup')}`, { cookie: engineer });
		expect(all.status).toBe(200);
		expect(await all.text()).toContain(`href="/build/${setup.id}"`);
		const none = await (await api('GET', '/build/setups?q=no-such-setup-name-xyz', { cookie: engineer })).text();
		expect(none).toContain('No saved setup matches');
	});
});

describe('/build form', () => {
	it('reports every field that is wrong at once', () => {
		const r = readForm(new URLSearchParams({ objectHeight: 'abc', track: '-5', magnification: '0', na: '2' }));
		expect(r.request).toBeNull();
		expect(Object.keys(r.errors).sort()).toEqual(['magnification', 'na', 'objectHeight', 'track']);
		expect(r.errors.objectHeight).toMatch(/enter a length/);
		expect(r.errors.track).toMatch(/longer than 0/);
		expect(r.errors.magnification).toMatch(/cannot be 0/);
		expect(r.errors.na).toMatch(/below 1/);
	});

	it('keeps a field\'s own parse message and reports the schema\'s messages for the others', () => {
		const r = readForm(new URLSearchParams({ track: 'far', wavelength: '5 nm', objectSize: 'x', imageSize: '2 mm', fNumber: '0.2' }));
		expect(r.errors.track).toMatch(/enter a length/);
		expect(r.errors.wavelength).toMatch(/at least 200 nm/);
		expect(r.errors.objectSize).toMatch(/enter a length/);
		expect(r.errors.imageSize).toBeUndefined();
		expect(r.errors.fNumber).toMatch(/above 0.5/);
	});

	it('gives a request and no errors for a good question, and the page shows every message with units on the labels', async () => {
		const ok = readForm(new URLSearchParams({ track: '30 cm', magnification: '-0.5', na: '0.03' }));
		expect(ok.errors).toEqual({});
		expect(ok.request?.trackMm).toBeCloseTo(300, 9);
		// Object and image sizes decide the magnification, and the field then shows the one used.
		const sized = readForm(new URLSearchParams({ track: '300 mm', magnification: '-1', objectSize: '10 mm', imageSize: '5 mm', na: '0.03' }));
		expect(sized.errors).toEqual({});
		expect(sized.request?.magnification).toBe(-0.5);
		expect(sized.values.magnification).toBe('-0.5');
		// The page's own hints write a typographic minus ("−0.5"); typed or pasted, it reads as -0.5.
		const typographic = readForm(new URLSearchParams({ track: '300 mm', magnification: '\u22120.5', na: '0.03' }));
		expect(typographic.errors).toEqual({});
		expect(typographic.request?.magnification).toBe(-0.5);
		const html = await (await api('GET', '/build?objectHeight=abc&track=-5&magnification=0&na=2', { cookie: engineer })).text();
		for (const f of ['objectHeight', 'track', 'magnification', 'na']) expect(html).toContain(`data-field-error="${f}"`);
		expect(html).toContain('4 fields need a fix');
		for (const f of ['objectHeight', 'track', 'wavelength', 'minGap', 'minWd', 'objectSize', 'imageSize']) expect(html).toMatch(new RegExp(`data-unit="${f}">\\((mm|nm)\\)`));
	});
});

describe('orientation words (one helper for table, setup page and build sheet)', () => {
	// Every word variant is checked in tests/unit/solver/orientation.test.ts; here: the answers use the helper.
	it('is what the solver answers with, for every element, in words a technician can check by eye', async () => {
		const body = await solve(engineer);
		expect(body.solutions.length).toBeGreaterThan(0);
		for (const s of body.solutions) {
			for (const e of s.elements) {
				expect(e.orientation).toBe(orientationText(e));
				expect(e.orientation).not.toMatch(/surface \d/);
				if (e.surfaces && !e.symmetric) expect(e.orientation).toMatch(/face toward the object/);
			}
		}
	});
});

describe('ranking the table explains', () => {
	it('orders the answers by rankKey, and each row below the first loses on a named rule', async () => {
		const body = await solve(engineer, { limit: 20 });
		const list = body.solutions;
		expect(list.length).toBeGreaterThan(1);
		for (let k = 1; k < list.length; k++) {
			expect(compareKeys(rankKey(list[k - 1]), rankKey(list[k]))).toBeLessThanOrEqual(0);
			const step = decidingStep(list[k - 1], list[k]);
			if (step === 'spot band') expect(spotBand(list[k].spot.ratioToAiry)).toBeGreaterThan(spotBand(list[k - 1].spot.ratioToAiry));
		}
	});

	it('ties spots within one 25 % band (ratio 1.30 and 1.50 share a band; 1.60 is the next)', () => {
		// band edges 1.25, 1.5625, 1.953…: powers of 1.25 (the ranking's own rule, common practice, no source)
		expect(spotBand(0.4)).toBe(spotBand(1));
		expect(spotBand(1.3)).toBe(spotBand(1.5));
		expect(spotBand(1.6)).toBe(spotBand(1.5) + 1);
	});
});

describe('figures', () => {
	it('prints matrix rounding noise as 0 and ordinary values without e-notation', () => {
		expect(matrixEntry(2.84e-14, 300)).toBe('0');
		expect(matrixEntry(0, 300)).toBe('0');
		expect(matrixEntry(-0.5000000001, 1)).toBe('-0.500000');
		expect(matrixEntry(-0.0123456789, 1 / 300)).toBe('-0.0123457');
		expect(matrixEntry(450.123456, 300, 5)).toBe('450.12');
		expect(matrixEntry(3e-6, 1)).toBe('3.00000 × 10^-6');
	});

	it('says which way the image moves: a longer EFL of a single positive lens moves the real image away from it', async () => {
		// Thin-lens equation 1/s + 1/s' = 1/f with s fixed: a larger f gives a larger s' (from memory).
		const body = await solve(engineer, { maxElements: 1, trackMm: 450, objectNA: 0.01, magnificationTolerance: 0.1, limit: 3 });
		expect(body.solutions.length).toBeGreaterThan(0);
		const row = body.solutions[0].tolerance[0];
		expect(row.imageShiftMm[0]).toBeGreaterThan(0);
		expect(row.imageShiftMm[1]).toBeLessThan(0);
		expect(imageShiftText(row.imageShiftMm[0])).toMatch(/^moves \d+\.\d\d mm away from the lens/);
		expect(imageShiftText(row.imageShiftMm[1])).toMatch(/^moves \d+\.\d\d mm toward the lens/);
		expect(imageShiftText(-0.001)).toBe('stays at the target plane');
	});
});
