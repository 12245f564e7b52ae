/**
 * Why parts are left out of a question, counted by reason (`stats.partsExcluded`), and the coating
 * warnings of an answer. Pure, shared by the three modes and by saved setups.
 *
 * Reasons are worded so that parts left out for the same cause share one line: every glass-code
 * part above 1100 nm gives "no refractive index at 1550 nm: glass codes are modelled 365–1100 nm".
 */
import { OpticsError, WavelengthOutOfRangeError, resolveMaterial } from '../../optics';
import { coversWavelength, outOfBandWords, bandWords } from '../../coating';
import type { PartsExcluded, SolutionWarning } from '../../solver/types';
import type { CandidatePart } from './elements';

/** How many SKUs each reason names. */
const SKUS_PER_REASON = 5;

const nm = (x: number) => String(Math.round(x * 10) / 10);

/** The grouped reason of an optics error met while building a part at a wavelength. */
export function exclusionReason(error: unknown, wavelengthNm: number): string {
	if (error instanceof WavelengthOutOfRangeError) {
		let kind: string | null = null;
		try {
			kind = resolveMaterial(error.material).kind;
		} catch {
			kind = null;
		}
		const where = kind === 'glass-code' ? 'glass codes are modelled' : `${error.material} is known`;
		return `no refractive index at ${nm(wavelengthNm)} nm: ${where} ${nm(error.minNm)}–${nm(error.maxNm)} nm`;
	}
	if (error instanceof OpticsError) return error.message;
	return error instanceof Error ? error.message : String(error);
}

/** The reason of a datasheet-only part outside the glass range. */
export function datasheetOnlyReason(wavelengthNm: number, range: readonly [number, number]): string {
	return `no refractive index at ${nm(wavelengthNm)} nm: a datasheet-only part is taken to be optical glass, modelled ${range[0]}–${range[1]} nm`;
}

/** The reason of a part left out because the question asked for parts coated for the wavelength. */
export function coatingExclusionReason(wavelengthNm: number): string {
	return `coating band does not cover ${nm(wavelengthNm)} nm (the question leaves such parts out)`;
}

/** Per-part reasons → one entry per reason, most parts first. */
export function groupExcluded(list: readonly { sku: string; reason: string }[]): PartsExcluded[] {
	const by = new Map<string, PartsExcluded>();
	for (const { sku, reason } of list) {
		let e = by.get(reason);
		if (!e) by.set(reason, (e = { reason, count: 0, skus: [] }));
		e.count++;
		if (e.skus.length < SKUS_PER_REASON) e.skus.push(sku);
	}
	return [...by.values()].sort((a, b) => b.count - a.count || a.reason.localeCompare(b.reason));
}

/** True when the part has a coating band and the wavelength lies outside it. */
export function outsideCoating(part: Pick<CandidatePart, 'coatingBandNm'>, wavelengthNm: number): boolean {
	return !coversWavelength(part.coatingBandNm ?? null, wavelengthNm);
}

/** The coating warnings of an answer made of `parts` at the wavelength (one per part outside its band). */
export function coatingWarnings(parts: readonly Pick<CandidatePart, 'partId' | 'sku' | 'coating' | 'coatingBandNm'>[], wavelengthNm: number): SolutionWarning[] {
	const out: SolutionWarning[] = [];
	const seen = new Set<number>();
	for (const p of parts) {
		if (seen.has(p.partId) || !p.coatingBandNm || coversWavelength(p.coatingBandNm, wavelengthNm)) continue;
		seen.add(p.partId);
		out.push({ code: 'coating-out-of-band', partId: p.partId, sku: p.sku, message: outOfBandWords(p.sku, p.coating ?? null, p.coatingBandNm, wavelengthNm) });
	}
	return out;
}

export { bandWords };
