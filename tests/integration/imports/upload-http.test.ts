/**
 * Uploads over HTTP, as the wizard and API clients send them: the body is read as a stream
 * (multipart parsed as it arrives, the file spooled to a temporary file), so these check the
 * route side: fields after the file, a body that passes the limit without declaring its length,
 * refused files through the wizard's form action, and that nothing is recorded for a refusal.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { count, desc, eq } from 'drizzle-orm';
import * as t from '../../../src/lib/server/db/schema';
import { CSV_MAX_BYTES } from '../../../src/lib/server/imports/csv';
import { APP, cookieFor, url } from '../accounts/helpers';
import { db, deleteParts, enc, pcxRow, PCX_HEADER, pool } from './helpers';

const tag = `UH${Date.now().toString(36).toUpperCase()}`;
afterAll(async () => {
	await deleteParts(tag);
	await pool.end();
});

const importCount = async () => (await db.select({ n: count() }).from(t.imports))[0].n;

/** A multipart body with the file first and the text fields after it (the order a client may choose). */
function multipart(file: { name: string; bytes: Uint8Array }, fields: Record<string, string>, boundary = `----gc${Date.now()}`) {
	const parts: Uint8Array[] = [
		enc(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="${file.name}"\r\nContent-Type: text/csv\r\n\r\n`),
		file.bytes,
		enc('\r\n')
	];
	for (const [k, v] of Object.entries(fields)) parts.push(enc(`--${boundary}\r\nContent-Disposition: form-data; name="${k}"\r\n\r\n${v}\r\n`));
	parts.push(enc(`--${boundary}--\r\n`));
	return { body: Buffer.concat(parts), type: `multipart/form-data; boundary=${boundary}` };
}

describe('CSV uploads over HTTP', () => {
	it('takes the file and the fields after it (API one-shot import, dry run)', async () => {
		const cookie = await cookieFor('stockroom@tarnwell.example');
		const text = PCX_HEADER + '\n' + [pcxRow(`${tag}-A`, 1), pcxRow(`${tag}-B`, 2)].join('\n') + '\n';
		const { body, type } = multipart({ name: 'Preisliste ø.csv', bytes: enc(text) }, { supplier: 'Kestrelmoor Optics', dryRun: 'true' });
		const res = await fetch(url('/api/v1/imports'), { method: 'POST', headers: { cookie, origin: APP(), 'content-type': type }, body });
		expect(res.status).toBe(200);
		const report = await res.json();
		expect(report).toMatchObject({ status: 'checked', filename: 'Preisliste ø.csv', rowsTotal: 2, counts: { created: 2, rejected: 0 }, supplier: { name: 'Kestrelmoor Optics' } });
		expect(report.sizeBytes).toBe(enc(text).byteLength);
	});

	it('answers 413 when a body without a declared length passes the limit, and records nothing', async () => {
		const cookie = await cookieFor('stockroom@tarnwell.example');
		const before = await importCount();
		const boundary = `----gc${Date.now()}`;
		let sent = 0;
		const line = enc('a,b\n'.repeat(16 * 1024)); // 64 KB
		const body = new ReadableStream<Uint8Array>({
			start(c) {
				c.enqueue(enc(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="huge.csv"\r\nContent-Type: text/csv\r\n\r\n`));
			},
			pull(c) {
				// Up to twice the limit (the server drains what it no longer reads, so the whole body goes out).
				if (sent > 2 * CSV_MAX_BYTES) {
					c.enqueue(enc(`\r\n--${boundary}--\r\n`));
					c.close();
					return;
				}
				sent += line.byteLength;
				c.enqueue(line);
			}
		});
		const res = await fetch(url('/api/v1/imports'), {
			method: 'POST',
			headers: { cookie, origin: APP(), 'content-type': `multipart/form-data; boundary=${boundary}` },
			body,
			duplex: 'half'
		} as RequestInit);
		expect(res.status).toBe(413);
		const out = await res.json();
		expect(out.error.message).toMatch(/at most 16 MB/);
		expect(await importCount()).toBe(before);
	});

	it('shows why the wizard refuses a file (not a CSV, header only, none chosen), and records nothing', async () => {
		const cookie = await cookieFor('stockroom@tarnwell.example');
		const before = await importCount();
		const post = async (name: string, bytes: Uint8Array) => {
			const { body, type } = multipart({ name, bytes }, { supplierId: '' });
			const res = await fetch(url('/imports/new'), {
				method: 'POST',
				headers: { cookie, origin: APP(), 'content-type': type, 'x-sveltekit-action': 'true', accept: 'application/json' },
				body
			});
			const out = await res.json();
			expect(out.type).toBe('failure');
			return { status: out.status as number, data: JSON.parse(out.data) as unknown };
		};
		const png = await post('photo.csv', new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13]));
		expect(png.status).toBe(400);
		expect(JSON.stringify(png.data)).toMatch(/This is a PNG image, not a CSV file/);
		const headerOnly = await post('empty.csv', enc(PCX_HEADER + '\n'));
		expect(JSON.stringify(headerOnly.data)).toMatch(/header row but no data rows/);
		const none = await post('', new Uint8Array());
		expect(JSON.stringify(none.data)).toMatch(/Choose a CSV file/);
		expect(await importCount()).toBe(before);
	});

	it('stores a good file through the wizard and opens its mapping step', async () => {
		const cookie = await cookieFor('stockroom@tarnwell.example');
		const text = PCX_HEADER + '\n' + pcxRow(`${tag}-W`, 3) + '\n';
		const { body, type } = multipart({ name: 'wizard.csv', bytes: enc(text) }, { supplierId: '' });
		const res = await fetch(url('/imports/new'), {
			method: 'POST',
			headers: { cookie, origin: APP(), 'content-type': type, 'x-sveltekit-action': 'true', accept: 'application/json' },
			body
		});
		const out = await res.json();
		expect(out.type).toBe('redirect');
		const id = Number(/^\/imports\/(\d+)$/.exec(out.location)?.[1]);
		const [rec] = await db.select().from(t.imports).where(eq(t.imports.id, id)).orderBy(desc(t.imports.id));
		expect(rec).toMatchObject({ filename: 'wizard.csv', rowsTotal: 1, status: 'uploaded', sizeBytes: enc(text).byteLength });
	});
});
