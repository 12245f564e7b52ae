/**
 * The solve answer as a stream of JSON lines (`Accept: application/x-ndjson`), through the built app against the
 * demo stock: the last line is the same answer the plain request gives, progress lines (if any) count up to 1,
 * bad input is refused before the stream with a plain 400 naming the field, and closing the connection mid-answer
 * leaves the solver free for the next question.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { APP, cookieFor, url } from '../accounts/helpers';

let engineer: string;
beforeAll(async () => {
	engineer = await cookieFor('engineer@tarnwell.example');
});

const question = { maxElements: 2, trackMm: 400, magnification: -1, objectNA: 0.02, objectHeightMm: 2, limit: 5 };
const post = (body: unknown, accept = 'application/x-ndjson', signal?: AbortSignal) =>
	fetch(url('/api/v1/solve'), { method: 'POST', headers: { cookie: engineer, origin: APP(), 'content-type': 'application/json', accept }, body: JSON.stringify(body), signal });

describe('POST /api/v1/solve as a stream of JSON lines', () => {
	it('ends with the plain answer; progress lines count up to 1', async () => {
		const res = await post(question);
		expect(res.status).toBe(200);
		expect(res.headers.get('content-type')).toMatch(/^application\/x-ndjson/);
		const lines = (await res.text()).trim().split('\n').map((l) => JSON.parse(l));
		const last = lines.at(-1);
		expect(last.type).toBe('result');
		const progress = lines.slice(0, -1);
		expect(progress.every((l) => l.type === 'progress')).toBe(true);
		const fractions = progress.map((l) => l.fraction as number);
		for (let i = 1; i < fractions.length; i++) expect(fractions[i]).toBeGreaterThanOrEqual(fractions[i - 1]);
		if (fractions.length) expect(fractions.at(-1)).toBe(1);
		const plain = await (await post(question, 'application/json')).json();
		const sig = (r: { solutions: { elements: { sku: string; reversed: boolean }[]; objectDistanceMm: number }[] }) =>
			r.solutions.map((s) => `${s.elements.map((e) => `${e.sku}${e.reversed ? 'r' : ''}`).join('+')}@${s.objectDistanceMm.toFixed(6)}`);
		expect(last.result.solutions.length).toBeGreaterThan(0);
		expect(sig(last.result)).toEqual(sig(plain));
	});

	it('refuses bad input before the stream: a plain 400 naming the field', async () => {
		const res = await post({ ...question, trackMm: -5 });
		expect(res.status).toBe(400);
		expect(res.headers.get('content-type')).toMatch(/^application\/json/);
		const body = await res.json();
		expect(Object.keys(body.error.fields)).toContain('trackMm');
	});

	it('a beam question streams too, and an answer dropped mid-way leaves the solver free', async () => {
		const beam = { mode: 'beam', wavelengthNm: 1064, input: { waistDiameterMm: 2, waistPositionMm: 0 }, target: { waistDiameterMm: 0.02, waistPositionMm: 150 }, limit: 5 };
		// Start and drop three answers at once (more than the per-user cap of two if they were still counted).
		for (let k = 0; k < 3; k++) {
			const c = new AbortController();
			const res = await post(beam, 'application/x-ndjson', c.signal);
			expect(res.status).toBe(200);
			c.abort();
		}
		// The next questions are admitted (not 429) and answered in full.
		for (let k = 0; k < 2; k++) {
			const lines = (await (await post(beam)).text()).trim().split('\n').map((l) => JSON.parse(l));
			expect(lines.at(-1).type).toBe('result');
			expect(lines.at(-1).result.solutions.length).toBeGreaterThan(0);
		}
	});
});
