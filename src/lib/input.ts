/**
 * Shared zod pieces for text and dates, so that every schema refuses the same malformed input
 * with a 400 that names the field (instead of the database refusing it with a 500, or quietly
 * storing something else).
 *
 * - Text: no NUL or other C0 control characters (tab, line feed and carriage return are fine)
 *   and no lone UTF-16 surrogates (JSON can carry "\ud800"; MariaDB's utf8mb4 cannot store it).
 * - Dates: a real calendar date (2026-02-30 is refused, not rolled over to 2 March), years
 *   1000–9999 (what a DATETIME column holds), and never `null` coerced to 1970.
 */
import { z } from 'zod';

// C0 controls except \t \n \r, and a high surrogate not followed by a low one or a low one not preceded by a high one.
const BAD_TEXT = /[\u0000-\u0008\u000B\u000C\u000E-\u001F]|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

/** Why a string cannot be stored as text, or null when it can. */
export function badTextReason(s: string): string | null {
	const m = BAD_TEXT.exec(s);
	if (!m) return null;
	return m[0].charCodeAt(0) >= 0xd800 ? 'Contains a broken character (a lone UTF-16 surrogate).' : 'Contains a control character (such as NUL).';
}

/** A string without NUL, other control characters or lone surrogates; chain `.trim().max()` as usual. */
export function text(params?: Parameters<typeof z.string>[0]) {
	return z.string(params).superRefine((s, ctx) => {
		const reason = badTextReason(s);
		if (reason) ctx.addIssue({ code: 'custom', message: reason });
	});
}

const ISO_DATE = /^(\d{4})-(\d{2})-(\d{2})(?:[T ](\d{2}):(\d{2})(?::(\d{2})(?:\.\d{1,9})?)?(Z|[+-]\d{2}:?\d{2})?)?$/;

/** The Date of an ISO date or date-time string whose calendar fields are real, else null. */
export function parseIsoDate(s: string): Date | null {
	const m = ISO_DATE.exec(s.trim());
	if (!m) return null;
	const [year, month, day] = [Number(m[1]), Number(m[2]), Number(m[3])];
	const [hour, minute, second] = [Number(m[4] ?? 0), Number(m[5] ?? 0), Number(m[6] ?? 0)];
	if (year < 1000 || month < 1 || month > 12 || day < 1 || hour > 23 || minute > 59 || second > 59) return null;
	// The day must exist in that month (Date.UTC would roll 30 February over to 2 March).
	if (day > new Date(Date.UTC(year, month, 0)).getUTCDate()) return null;
	const d = new Date(m[4] === undefined ? `${m[1]}-${m[2]}-${m[3]}T00:00:00Z` : s.trim().replace(' ', 'T'));
	return Number.isNaN(d.getTime()) ? null : d;
}

/**
 * A date given as an ISO string (`2026-03-01`, `2026-03-01T09:30:00Z`; a date alone is midnight
 * UTC) or a Date; impossible dates, other types and `null` are refused with `message`.
 */
export function dateInput(message = 'Enter a real date, e.g. 2026-03-01.') {
	return z.union([z.string(), z.date()], { error: message }).transform((v, ctx) => {
		const d = typeof v === 'string' ? parseIsoDate(v) : Number.isNaN(v.getTime()) ? null : v;
		if (!d || d.getUTCFullYear() < 1000 || d.getUTCFullYear() > 9999) {
			ctx.addIssue({ code: 'custom', message });
			return z.NEVER;
		}
		return d;
	});
}
