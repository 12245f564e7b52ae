/**
 * Prices: one unit per name (issue 16). Everything a person or a client reads or writes calls the
 * price `unitPrice` and gives it in currency units with at most two decimals (38.00 EUR); only the
 * database keeps integer minor units (`unit_price_minor`, cents), converted here and nowhere else.
 * All currencies the product takes (ISO 4217 codes) are treated as having two decimals (common
 * practice for EUR, USD, GBP, CHF; no source).
 */

/** Currency units (38.5) → stored minor units (3850). */
export function toMinor(major: number): number {
	return Math.round(major * 100);
}

/** Stored minor units (3850) → currency units (38.5); null stays null. */
export function toMajor(minor: number | null | undefined): number | null {
	return minor == null ? null : minor / 100;
}

/** True when `major` has at most two decimals (so it converts to whole cents exactly). */
export function isWholeCents(major: number): boolean {
	return Math.abs(major * 100 - Math.round(major * 100)) < 1e-6;
}

/** "€38.50" from currency units, or `empty` without a price. */
export function formatMoney(major: number | null | undefined, currency: string, empty = '–'): string {
	if (major == null) return empty;
	try {
		return new Intl.NumberFormat('en-GB', { style: 'currency', currency }).format(major);
	} catch {
		return `${major.toFixed(2)} ${currency}`;
	}
}

/** "38.50": currency units with two decimals, as CSV files and form fields write them. */
export function priceText(major: number | null | undefined): string {
	return major == null ? '' : major.toFixed(2);
}
