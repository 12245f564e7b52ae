/**
 * Fixtures of one browser test file, made through the app's own API (a session of a demo user, as a script
 * would): parts, drawers and stock with names of this file's own (`tag`), so that a test asserts on what it made
 * and never counts or names the demo data. `cleanup()` archives the parts again (DELETE /api/v1/parts/:id).
 */
import type { APIRequestContext, Locator, Page } from 'playwright-core';
import { testEnv } from './env';
import { DEMO_PASSWORD, expect } from './browser';

export interface PartFixture {
	id: number;
	sku: string;
}

export interface LocationFixture {
	id: number;
	code: string;
}

/** A cemented doublet of the demo glasses (crown 517642, flint 620364), f ≈ 100 mm, Ø 25.4 mm. */
export const DOUBLET_SURFACES = [
	{ radiusMm: 61.5, thicknessMm: 6, material: '517642' },
	{ radiusMm: -44.7, thicknessMm: 2.5, material: '620364' },
	{ radiusMm: -128.6 }
];

export class Fixtures {
	private readonly parts: number[] = [];

	private constructor(
		/** Unique to this run and file: upper-case letters, digits and '-', fit for a SKU or a drawer code. */
		readonly tag: string,
		private readonly cookie: string
	) {}

	/** Signs `email` in over the API; `prefix` starts the tag (e.g. 'E2E-CAT'). */
	static async open(prefix: string, email = 'stockroom@tarnwell.example'): Promise<Fixtures> {
		const tag = `${prefix}-${Date.now().toString(36)}${Math.floor(Math.random() * 36 ** 3).toString(36)}`.toUpperCase();
		const res = await fetch(url('/api/v1/session'), {
			method: 'POST',
			headers: { 'content-type': 'application/json', origin: origin() },
			body: JSON.stringify({ email, password: DEMO_PASSWORD() })
		});
		const cookie = res.headers
			.getSetCookie()
			.map((c) => c.split(';')[0])
			.find((pair) => /^(__Host-)?gc_session=./.test(pair));
		if (res.status !== 200 || !cookie) throw new Error(`fixtures: sign-in of ${email} gave ${res.status}: ${await res.text()}`);
		return new Fixtures(tag, cookie);
	}

	/** A JSON API call as this user; a status of 400 or more throws with the answer. */
	async api<T = unknown>(method: string, path: string, body?: unknown): Promise<T> {
		const res = await fetch(url(path), {
			method,
			headers: { cookie: this.cookie, origin: origin(), ...(body === undefined ? {} : { 'content-type': 'application/json' }) },
			body: body === undefined ? undefined : JSON.stringify(body)
		});
		const text = await res.text();
		if (res.status >= 400) throw new Error(`fixtures: ${method} ${path} gave ${res.status}: ${text}`);
		return (text ? JSON.parse(text) : null) as T;
	}

	/** A part (POST /api/v1/parts); `sku` is `<tag>-<suffix>`. Defaults: kind 'other', Ø 25 mm, EFL 100 mm. */
	async part(suffix: string, fields: Record<string, unknown> = {}): Promise<PartFixture> {
		const sku = `${this.tag}-${suffix}`;
		const made = await this.api<{ id: number }>('POST', '/api/v1/parts', { sku, name: `Test part ${suffix}`, kind: 'other', diameterMm: 25, eflMm: 100, ...fields });
		this.parts.push(made.id);
		return { id: made.id, sku };
	}

	/** A drawer (POST /api/v1/locations); `code` is `<tag>-<suffix>`. */
	async location(suffix: string, name = `Test drawer ${suffix}`): Promise<LocationFixture> {
		const code = `${this.tag}-${suffix}`;
		const made = await this.api<{ id: number; code: string }>('POST', '/api/v1/locations', { code, name });
		return { id: made.id, code: made.code };
	}

	/** Receives units (POST /api/v1/stock/receive), usable unless told otherwise. */
	async receive(partId: number, locationId: number, quantity: number, note = 'test fixture', condition: 'usable' | 'quarantine' | 'damaged' = 'usable') {
		await this.api('POST', '/api/v1/stock/receive', { partId, locationId, quantity, note, condition });
	}

	/** Archives every part made here and signs out. */
	async cleanup() {
		for (const id of this.parts) await this.api('DELETE', `/api/v1/parts/${id}`).catch(() => undefined);
		await this.api('DELETE', '/api/v1/session').catch(() => undefined);
	}
}

const origin = () => new URL(testEnv('APP_URL')).origin;
const url = (path: string) => new URL(path, testEnv('APP_URL')).toString();

/**
 * The parts of a saved setup and the drawers holding them, read through the API with the page's session
 * (`page.request`): what its build sheet must name, whatever the stock's naming.
 */
export async function setupParts(request: APIRequestContext, setupId: number): Promise<{ skus: string[]; drawers: string[] }> {
	const get = <T>(path: string) => getJson<T>(request, path);
	const setup = await get<{ solution: { elements: { partId: number }[] } }>(`/api/v1/setups/${setupId}`);
	const skus: string[] = [];
	const drawers = new Set<string>();
	for (const { partId } of setup.solution.elements) {
		skus.push((await get<{ sku: string }>(`/api/v1/parts/${partId}`)).sku);
		for (const row of (await get<{ items: { code: string; condition: string }[] }>(`/api/v1/stock?partId=${partId}`)).items) if (row.condition === 'usable') drawers.add(row.code);
	}
	return { skus, drawers: [...drawers] };
}

/** GET through the API with the page's session; a refusal throws, naming the path. */
async function getJson<T>(request: APIRequestContext, path: string): Promise<T> {
	const res = await request.get(url(path));
	if (!res.ok()) throw new Error(`GET ${path} gave ${res.status()}: ${await res.text()}`);
	return (await res.json()) as T;
}

/**
 * On a saved setup's page: reserves all its parts, opens its build sheet and checks that the sheet names every part
 * of the setup and a drawer that holds it (`setupParts`). Returns the sheet.
 */
export async function reserveAndOpenSheet(page: Page, setupId: number): Promise<Locator> {
	await page.getByRole('button', { name: 'Reserve all parts' }).click();
	await expect(page.getByTestId('reserve-ok')).toBeVisible();
	await expect(page.getByTestId('reserve-error')).toHaveCount(0);
	await expect(page.getByTestId('reservations').getByRole('listitem')).not.toHaveCount(0);
	await page.getByRole('link', { name: 'Build sheet' }).click();
	await expect(page).toHaveURL(/\/sheet$/);
	const sheet = page.getByTestId('build-sheet');
	const { skus, drawers } = await setupParts(page.request, setupId);
	expect(skus.length).toBeGreaterThan(0);
	for (const sku of skus) await expect(sheet).toContainText(sku);
	expect(drawers.length).toBeGreaterThan(0);
	await expect(sheet).toContainText(new RegExp(drawers.map((d) => d.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')).join('|')));
	return sheet;
}

/** Releases the active reservations of these setups through the API with the page's session, as the engineer would. */
export async function releaseSetups(request: APIRequestContext, setupIds: readonly number[]): Promise<void> {
	for (const id of setupIds) {
		const setup = await getJson<{ reservations: { id: number }[] }>(request, `/api/v1/setups/${id}`);
		for (const r of setup.reservations) {
			const res = await request.delete(url(`/api/v1/reservations/${r.id}`), { headers: { origin: origin() } });
			if (!res.ok()) throw new Error(`DELETE reservation ${r.id} gave ${res.status()}: ${await res.text()}`);
		}
	}
}
