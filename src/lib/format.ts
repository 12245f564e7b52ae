/**
 * How pages write dates, times and part kinds: one format everywhere, so that the imports, the ledger
 * and the requests read alike ("2 Dec 2026, 04:46").
 */
import type { PartKind } from '$lib/catalogue/part-fields';

type When = string | number | Date;

function toDate(when: When): Date | null {
	const d = when instanceof Date ? when : new Date(when);
	return Number.isNaN(d.getTime()) ? null : d;
}

/**
 * Date and time to the minute, day first with the month's short name ("2 Dec 2026, 04:46"), in the
 * viewer's time zone unless `timeZone` is given (tests and mails pass 'UTC'). Empty input gives '—'.
 */
export function formatDateTime(when: When | null | undefined, timeZone?: string): string {
	const d = when == null || when === '' ? null : toDate(when);
	if (!d) return '—';
	return new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit', hourCycle: 'h23', timeZone }).format(d);
}

/** The day alone, in the same style ("2 Dec 2026"). */
export function formatDate(when: When | null | undefined, timeZone?: string): string {
	const d = when == null || when === '' ? null : toDate(when);
	if (!d) return '—';
	return new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone }).format(d);
}

/** Names of the part kinds as people read them; the codes stay in URLs, the API and files. */
export const KIND_LABELS: Record<PartKind, string> = {
	'plano-convex': 'Plano-convex',
	biconvex: 'Biconvex',
	'plano-concave': 'Plano-concave',
	biconcave: 'Biconcave',
	'positive-meniscus': 'Positive meniscus',
	'negative-meniscus': 'Negative meniscus',
	'achromatic-doublet': 'Achromatic doublet',
	other: 'Other'
};

/** The label of a kind code; an unknown code is shown as it is. */
export function kindLabel(kind: string): string {
	return (KIND_LABELS as Record<string, string>)[kind] ?? kind;
}

/**
 * The glasses of a prescription in the order light meets them, joined with " + " ("517642 + 620364"):
 * the material after each surface, air (null) left out.
 */
export function glassesOf(surfaces: readonly { material?: string | null }[]): string {
	return surfaces
		.map((s) => s.material)
		.filter((m): m is string => !!m)
		.join(' + ');
}

/**
 * Stock of a part by condition in one wording for every page: "3 usable · 1 in quarantine · 1 damaged"
 * (usable always, the others only when there are any). Only usable units count as on hand.
 */
export function stockWords(c: { usable: number; quarantine?: number; damaged?: number }): string {
	const out = [`${c.usable} usable`];
	if (c.quarantine) out.push(`${c.quarantine} in quarantine`);
	if (c.damaged) out.push(`${c.damaged} damaged`);
	return out.join(' · ');
}
