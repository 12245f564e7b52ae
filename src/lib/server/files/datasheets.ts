/**
 * Datasheets and photos of parts: bytes in S3, one row each in `datasheets`. The type comes from the
 * magic bytes; images get a PNG thumbnail. Consistency between the two stores:
 * - upload: objects first, then the row; if the row cannot be written the objects are deleted again;
 *   if S3 is down nothing reaches the database (503).
 * - delete: the row is deleted inside a transaction that only commits once S3 has deleted the objects;
 *   if S3 is down the row stays with its object (503).
 */
import { createHash, randomUUID } from 'node:crypto';
import fs from 'node:fs';
import { and, desc, eq, inArray, isNull } from 'drizzle-orm';
import { z } from 'zod';
import type { DbOrTx } from '$lib/server/db';
import { datasheets, parts, users, type Datasheet, type DatasheetType } from '$lib/server/db/schema';
import { DomainError, NotFound } from '$lib/server/errors';
import { recordAudit } from '$lib/server/audit';
import { describeRefused, EXTENSIONS, isImageType, maxBytesFor, sniffType, MAX_IMAGE_BYTES, MAX_PDF_BYTES } from './magic';
import { makeThumbnail, ThumbnailFailed, type Thumbnail } from './thumbnails';
import { imageSize, MAX_IMAGE_MEGAPIXELS, MAX_IMAGE_PIXELS } from './image-size';
import { spoolToTempFile, type SpooledFile } from './spool';
import type { ObjectStore, StoredObject } from './s3';
import { inTransaction } from '$lib/server/db/transaction';

/** `POST /datasheets/match`: the dropped files' names. */
export const matchInputSchema = z.object({ filenames: z.array(z.string().max(255)).min(1).max(500) }).strict();

export interface DatasheetJson {
	id: number;
	partId: number;
	filename: string;
	contentType: DatasheetType;
	kind: 'document' | 'photo';
	sizeBytes: number;
	sha256: string;
	uploadedAt: string;
	uploadedBy: { id: number; name: string | null };
	/** Streams the file (signed-in users only). */
	downloadUrl: string;
	/** The PNG thumbnail of a photo, or null. */
	thumbnailUrl: string | null;
	thumbnail: { width: number; height: number } | null;
}

const mb = (n: number) => `${Math.round(n / (1024 * 1024))} MB`;

/** The name the client gave, reduced to a plain file name for display (never used as a key). */
export function cleanFilename(name: string): string {
	const base = name.split(/[\\/]/).pop() ?? '';
	// eslint-disable-next-line no-control-regex
	const cleaned = base.replace(/[\u0000-\u001f\u007f]/g, '').trim().slice(0, 255);
	return cleaned || 'unnamed';
}

export class DatasheetNotFound extends NotFound {
	constructor(id: number) {
		super(`There is no datasheet ${id}.`);
	}
}

/**
 * Checks the bytes of an upload and says what they are. Throws DomainError 400 (empty, wrong type,
 * unreadable image) or 413 (too large) with a message for people.
 */
export function checkUpload(bytes: Uint8Array): DatasheetType {
	return checkHead(bytes.subarray(0, HEAD_BYTES), bytes.byteLength);
}

/** What `checkUpload` decides, from the first HEAD_BYTES bytes and the size alone. */
function checkHead(head: Uint8Array, size: number): DatasheetType {
	if (size === 0) throw new DomainError(400, 'empty-file', 'The file is empty.');
	const type = sniffType(head);
	if (!type) {
		throw new DomainError(
			400,
			'unsupported-type',
			`This looks like ${describeRefused(head)}. Upload a PDF, PNG or JPEG file; the type is read from the file itself, not its name.`
		);
	}
	if (type === 'image/webp') {
		throw new DomainError(400, 'unsupported-type', 'WebP images are not accepted (no thumbnail can be made): save the photo as PNG or JPEG.');
	}
	if (size > maxBytesFor(type)) throw tooLarge(type, `${(size / (1024 * 1024)).toFixed(1)} MB`);
	return type;
}

const tooLarge = (type: DatasheetType, size: string) =>
	new DomainError(413, 'too-large', `The file is ${size}; ${isImageType(type) ? `photos may be at most ${mb(MAX_IMAGE_BYTES)}` : `PDFs may be at most ${mb(MAX_PDF_BYTES)}`}.`);

/** Bytes the type checks look at (the refusal message reads the start of the file). */
const HEAD_BYTES = 512;

/** An upload taken to a temporary file by `spoolDatasheet`, with its type. */
export type SpooledDatasheet = SpooledFile & { contentType: DatasheetType };

/**
 * Takes an upload as it streams in, to a temporary file: the type from its first bytes, refused
 * with 413 as soon as it passes the cap of its type (of a PDF, while the type is not known yet).
 * Leaves no file behind when it refuses; otherwise the caller removes the file (`remove`).
 */
export async function spoolDatasheet(source: AsyncIterable<Uint8Array> | Uint8Array): Promise<SpooledDatasheet> {
	let type: DatasheetType | null = null;
	const file = await spoolToTempFile(
		source,
		(_chunk, so) => {
			if (type === null && so.head.byteLength >= 16) type = sniffType(so.head);
			const cap = type ? maxBytesFor(type) : MAX_PDF_BYTES;
			if (so.size > cap) throw tooLarge(type ?? 'application/pdf', `more than ${mb(cap)}`);
		},
		HEAD_BYTES
	);
	try {
		return { ...file, contentType: checkHead(file.head, file.size) };
	} catch (err) {
		await file.remove();
		throw err;
	}
}

function toJson(row: Datasheet, uploaderName: string | null): DatasheetJson {
	return {
		id: row.id,
		partId: row.partId,
		filename: row.filename,
		contentType: row.contentType,
		kind: isImageType(row.contentType) ? 'photo' : 'document',
		sizeBytes: row.sizeBytes,
		sha256: row.sha256,
		uploadedAt: row.uploadedAt.toISOString(),
		uploadedBy: { id: row.uploadedBy, name: uploaderName },
		downloadUrl: `/api/v1/datasheets/${row.id}`,
		thumbnailUrl: row.thumbnailKey ? `/api/v1/datasheets/${row.id}/thumbnail` : null,
		thumbnail: row.thumbnailKey && row.thumbnailWidth && row.thumbnailHeight ? { width: row.thumbnailWidth, height: row.thumbnailHeight } : null
	};
}

async function assertPart(db: DbOrTx, partId: number) {
	const [part] = await db.select({ id: parts.id, sku: parts.sku }).from(parts).where(eq(parts.id, partId)).limit(1);
	if (!part) throw new DomainError(404, 'not-found', `There is no part ${partId}.`);
	return part;
}

/**
 * Stores a datasheet or photo for a part. `file` is the bytes, or an upload already taken by
 * `spoolDatasheet` (then the caller removes its temporary file): a PDF then goes to S3 streamed
 * from disk; a photo is read whole for its thumbnail (at most 15 MB).
 */
export async function uploadDatasheet(
	db: DbOrTx,
	store: ObjectStore,
	input: { partId: number; filename: string; file: Uint8Array | SpooledDatasheet; actorId: number }
): Promise<DatasheetJson> {
	const part = await assertPart(db, input.partId);
	const spooled = input.file instanceof Uint8Array ? null : input.file;
	const bytes = input.file instanceof Uint8Array ? input.file : null;
	const contentType = spooled ? spooled.contentType : checkUpload(bytes!);
	const sizeBytes = spooled ? spooled.size : bytes!.byteLength;
	const filename = cleanFilename(input.filename);
	const sha256 = spooled ? spooled.sha256 : createHash('sha256').update(bytes!).digest('hex');
	const thumb = isImageType(contentType) ? await thumbnailOf(bytes ?? (await fs.promises.readFile(spooled!.path)), contentType) : null;
	const uuid = randomUUID();
	const key = `datasheets/${uuid}`;
	const thumbnailKey = thumb ? `thumbnails/${uuid}.png` : null;
	const written: string[] = [];
	const undo = async () => {
		for (const k of written) await store.delete(k).catch(() => undefined);
	};
	try {
		const meta = { 'original-filename': filename, sha256, 'part-sku': part.sku };
		if (spooled) await store.putFile(key, spooled.path, contentType, meta);
		else await store.put(key, bytes!, contentType, meta);
		written.push(key);
		if (thumb && thumbnailKey) {
			await store.put(thumbnailKey, thumb.png, 'image/png', { 'thumbnail-of': key });
			written.push(thumbnailKey);
		}
	} catch (err) {
		await undo();
		throw err;
	}
	try {
		const id = await inTransaction(db, async (tx) => {
			const [{ id }] = await tx
				.insert(datasheets)
				.values({
					partId: input.partId,
					s3Key: key,
					thumbnailKey,
					thumbnailWidth: thumb?.width ?? null,
					thumbnailHeight: thumb?.height ?? null,
					filename,
					contentType,
					sizeBytes,
					sha256,
					uploadedBy: input.actorId
				})
				.$returningId();
			await recordAudit(tx, {
				actorId: input.actorId,
				action: 'datasheet.upload',
				targetType: 'part',
				targetId: input.partId,
				detail: { datasheetId: id, filename, contentType, sizeBytes, sha256 }
			});
			return id;
		});
		return (await getDatasheet(db, id))!;
	} catch (err) {
		await undo();
		throw err;
	}
}

const unreadable = () => new DomainError(400, 'unreadable-image', 'The image could not be read: the file may be damaged or not really an image.');

/**
 * The pixel count from the header first (an image bomb is refused before a pixel is decoded), then
 * the thumbnail, made in a worker thread (thumbnails.ts).
 */
async function thumbnailOf(bytes: Uint8Array, type: DatasheetType): Promise<Thumbnail> {
	const size = imageSize(bytes, type as 'image/png' | 'image/jpeg');
	if (!size) throw unreadable();
	if (size.width * size.height > MAX_IMAGE_PIXELS) {
		const mp = (size.width * size.height) / 1e6;
		throw new DomainError(
			413,
			'image-too-large',
			`The photo is ${size.width} × ${size.height} pixels (${mp < 100 ? mp.toFixed(1) : Math.round(mp)} megapixels); photos may have at most ${MAX_IMAGE_MEGAPIXELS} megapixels. Scale it down (for example to 4000 pixels on the long side) and upload it again.`,
			{ file: `At most ${MAX_IMAGE_MEGAPIXELS} megapixels.` }
		);
	}
	let thumb: Thumbnail | null;
	try {
		thumb = await makeThumbnail(bytes);
	} catch (err) {
		if (!(err instanceof ThumbnailFailed)) throw err;
		if (err.reason === 'out-of-memory') {
			throw new DomainError(413, 'image-too-large', 'The photo needs more memory to read than a thumbnail may use: scale it down and upload it again.');
		}
		throw new DomainError(503, 'thumbnail-unavailable', 'No thumbnail could be made in time (the server is busy); nothing was saved. Try again in a minute.');
	}
	if (!thumb) throw unreadable();
	return thumb;
}

/** The datasheets and photos of a part, newest first. */
export async function listDatasheets(db: DbOrTx, partId: number): Promise<DatasheetJson[]> {
	const rows = await db
		.select({ d: datasheets, name: users.name })
		.from(datasheets)
		.leftJoin(users, eq(users.id, datasheets.uploadedBy))
		.where(eq(datasheets.partId, partId))
		.orderBy(desc(datasheets.uploadedAt), desc(datasheets.id));
	return rows.map((r) => toJson(r.d, r.name));
}

export async function getDatasheet(db: DbOrTx, id: number): Promise<DatasheetJson | null> {
	const [r] = await db
		.select({ d: datasheets, name: users.name })
		.from(datasheets)
		.leftJoin(users, eq(users.id, datasheets.uploadedBy))
		.where(eq(datasheets.id, id))
		.limit(1);
	return r ? toJson(r.d, r.name) : null;
}

/** Headers for a download: never rendered by the browser as a page (SECURITY.md V12). */
export function downloadHeaders(d: { contentType: string; filename: string; sizeBytes?: number }, downloadName: string, disposition: 'attachment' | 'inline' = 'attachment') {
	const ascii = downloadName.replace(/[^A-Za-z0-9._-]/g, '_');
	const h: Record<string, string> = {
		'Content-Type': d.contentType,
		'Content-Disposition': `${disposition}; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(d.filename)}`,
		'X-Content-Type-Options': 'nosniff',
		'Content-Security-Policy': "default-src 'none'; sandbox",
		'Cache-Control': 'private, no-store'
	};
	if (d.sizeBytes !== undefined) h['Content-Length'] = String(d.sizeBytes);
	return h;
}

/** Opens a datasheet's bytes (or its thumbnail) for streaming, with the headers to send. */
export async function openDatasheet(
	db: DbOrTx,
	store: ObjectStore,
	id: number,
	which: 'file' | 'thumbnail' = 'file',
	/** 'inline': shown in the browser's own viewer (still under the sandbox CSP and nosniff). */
	disposition: 'attachment' | 'inline' = 'attachment'
): Promise<{ object: StoredObject; headers: Record<string, string> }> {
	const [row] = await db
		.select({ d: datasheets, sku: parts.sku })
		.from(datasheets)
		.innerJoin(parts, eq(parts.id, datasheets.partId))
		.where(eq(datasheets.id, id))
		.limit(1);
	if (!row) throw new DatasheetNotFound(id);
	const d = row.d;
	if (which === 'thumbnail') {
		if (!d.thumbnailKey) throw new DomainError(404, 'not-found', 'This datasheet has no thumbnail.');
		const object = await store.get(d.thumbnailKey);
		return {
			object,
			headers: downloadHeaders({ contentType: 'image/png', filename: `${d.filename}.thumbnail.png`, sizeBytes: object.contentLength }, `${row.sku}-${d.id}-thumbnail.png`, 'inline')
		};
	}
	const object = await store.get(d.s3Key);
	return { object, headers: downloadHeaders(d, `${row.sku}-${d.id}.${EXTENSIONS[d.contentType]}`, disposition) };
}

/** Deletes a datasheet: its objects and its row, both or neither. */
export async function deleteDatasheet(db: DbOrTx, store: ObjectStore, id: number, actorId: number): Promise<void> {
	await inTransaction(db, async (tx) => {
		const [d] = await tx.select().from(datasheets).where(eq(datasheets.id, id)).for('update');
		if (!d) throw new DatasheetNotFound(id);
		await tx.delete(datasheets).where(eq(datasheets.id, id));
		await recordAudit(tx, {
			actorId,
			action: 'datasheet.delete',
			targetType: 'part',
			targetId: d.partId,
			detail: { datasheetId: id, filename: d.filename, sha256: d.sha256 }
		});
		// Only when S3 has let go of the objects does the row go (a throw here rolls the delete back).
		await store.delete(d.s3Key);
		if (d.thumbnailKey) await store.delete(d.thumbnailKey);
	});
}

/** How a dropped file's name is matched to a SKU: the name without its extension, or that name up to " ", "_" or "(". */
export function skuCandidates(filename: string): string[] {
	const base = cleanFilename(filename);
	const stem = base.includes('.') ? base.slice(0, base.lastIndexOf('.')) : base;
	const out = [stem.trim()];
	const cut = stem.search(/[ _(]/);
	if (cut > 0) out.push(stem.slice(0, cut).trim());
	return [...new Set(out.filter(Boolean))];
}

export interface BulkMatch {
	filename: string;
	part: { id: number; sku: string; name: string } | null;
}

/** Matches file names to parts by SKU (case-insensitive; archived parts are left out). */
export async function matchFilenames(db: DbOrTx, filenames: readonly string[]): Promise<BulkMatch[]> {
	const candidates = filenames.map(skuCandidates);
	const all = [...new Set(candidates.flat())];
	const found = all.length
		? await db
				.select({ id: parts.id, sku: parts.sku, name: parts.name })
				.from(parts)
				.where(and(inArray(parts.sku, all), isNull(parts.archivedAt)))
		: [];
	const bySku = new Map(found.map((p) => [p.sku.toLowerCase(), p]));
	return filenames.map((filename, i) => {
		const hit = candidates[i].map((c) => bySku.get(c.toLowerCase())).find(Boolean) ?? null;
		return { filename, part: hit };
	});
}
