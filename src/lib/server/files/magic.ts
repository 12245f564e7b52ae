/**
 * File types by their first bytes (magic numbers), never by the name or the browser's claim.
 * Only the four types Glasscrib keeps are recognised; everything else (SVG, HTML, ZIP, ...) is refused.
 * Signatures: PDF "%PDF-" (ISO 32000-1:2008, 7.5.2); PNG 89 50 4E 47 0D 0A 1A 0A (ISO/IEC 15948:2004, 5.2);
 * JPEG FF D8 FF (ITU-T T.81 SOI marker followed by a marker); WebP "RIFF" size "WEBP" (RFC 9649, 2.5).
 */
import type { DatasheetType } from '$lib/server/db/schema';

const startsWith = (b: Uint8Array, sig: readonly number[], at = 0) => b.length >= at + sig.length && sig.every((v, i) => b[at + i] === v);
const ascii = (s: string) => [...s].map((c) => c.charCodeAt(0));

/** The type of a datasheet or photo, or null when the bytes are not one we accept. */
export function sniffType(bytes: Uint8Array): DatasheetType | null {
	if (startsWith(bytes, ascii('%PDF-'))) return 'application/pdf';
	if (startsWith(bytes, [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])) return 'image/png';
	if (startsWith(bytes, [0xff, 0xd8, 0xff])) return 'image/jpeg';
	if (startsWith(bytes, ascii('RIFF')) && startsWith(bytes, ascii('WEBP'), 8)) return 'image/webp';
	return null;
}

export const isImageType = (t: DatasheetType) => t.startsWith('image/');

/** File name extension for a type (used in download names). */
export const EXTENSIONS: Record<DatasheetType, string> = {
	'application/pdf': 'pdf',
	'image/png': 'png',
	'image/jpeg': 'jpg',
	'image/webp': 'webp'
};

/** Caps per type (bytes). */
export const MAX_PDF_BYTES = 25 * 1024 * 1024;
export const MAX_IMAGE_BYTES = 15 * 1024 * 1024;

export function maxBytesFor(t: DatasheetType): number {
	return isImageType(t) ? MAX_IMAGE_BYTES : MAX_PDF_BYTES;
}

/** A short human name of what the bytes look like, for the refusal message. */
export function describeRefused(bytes: Uint8Array): string {
	const head = new TextDecoder('utf-8', { fatal: false }).decode(bytes.subarray(0, 512)).trimStart().toLowerCase();
	if (head.startsWith('<svg') || (head.startsWith('<?xml') && head.includes('<svg'))) return 'an SVG image (not accepted: it can carry scripts)';
	if (head.startsWith('<!doctype html') || head.startsWith('<html') || head.includes('<script')) return 'an HTML page';
	if (startsWith(bytes, [0x50, 0x4b, 0x03, 0x04])) return 'a ZIP archive (or an office document)';
	if (startsWith(bytes, ascii('GIF8'))) return 'a GIF image (not accepted: use PNG, JPEG or WebP)';
	if (bytes.length === 0) return 'an empty file';
	return 'a file of an unknown type';
}
