/**
 * Typed errors and results of the optics core.
 *
 * Bad data that a caller can fix (an unknown material name, a wavelength a dispersion
 * formula does not cover, a prescription that cannot be a lens) is an `OpticsError`
 * with a stable `code`, so routes can map it to a 400 with a clear message. Functions
 * that are called on whole catalogues return a `Result` instead of throwing, so one
 * bad part never stops a snapshot.
 */

/** Stable machine-readable codes of every `OpticsError`. */
export type OpticsErrorCode =
	| 'unknown-material'
	| 'wavelength-out-of-range'
	| 'invalid-prescription'
	| 'invalid-argument'
	| 'no-prescription';

/**
 * Base class of all errors raised by `src/lib/optics`. `code` is stable and meant for
 * programs; `message` is a full sentence meant for people.
 */
export class OpticsError extends Error {
	/** Stable code, see `OpticsErrorCode`. */
	readonly code: OpticsErrorCode;

	constructor(code: OpticsErrorCode, message: string) {
		super(message);
		this.name = 'OpticsError';
		this.code = code;
	}
}

/** The material name is neither a known open material nor a six-digit glass code. */
export class UnknownMaterialError extends OpticsError {
	/** The name as given by the caller. */
	readonly material: string;

	constructor(material: string, detail?: string) {
		super(
			'unknown-material',
			`Unknown material "${material}"${detail ? `: ${detail}` : ''}. ` +
				'Use an open material name (fused-silica, caf2, sapphire-o) or a six-digit glass code such as 517642.'
		);
		this.name = 'UnknownMaterialError';
		this.material = material;
	}
}

/** The wavelength lies outside the range where the material's dispersion formula holds. */
export class WavelengthOutOfRangeError extends OpticsError {
	/** Canonical material name. */
	readonly material: string;
	/** Requested wavelength in nm. */
	readonly wavelengthNm: number;
	/** Lower end of the formula's validity range in nm. */
	readonly minNm: number;
	/** Upper end of the formula's validity range in nm. */
	readonly maxNm: number;

	constructor(material: string, wavelengthNm: number, minNm: number, maxNm: number) {
		super(
			'wavelength-out-of-range',
			`Wavelength ${wavelengthNm} nm is outside the validity range of the dispersion of ` +
				`${material} (${minNm}–${maxNm} nm).`
		);
		this.name = 'WavelengthOutOfRangeError';
		this.material = material;
		this.wavelengthNm = wavelengthNm;
		this.minNm = minNm;
		this.maxNm = maxNm;
	}
}

/** A prescription that cannot describe a lens (zero radius, negative thickness, ...). */
export class InvalidPrescriptionError extends OpticsError {
	constructor(message: string) {
		super('invalid-prescription', message);
		this.name = 'InvalidPrescriptionError';
	}
}

/** An argument outside its domain (non-finite number, zero magnification, ...). */
export class InvalidArgumentError extends OpticsError {
	constructor(message: string) {
		super('invalid-argument', message);
		this.name = 'InvalidArgumentError';
	}
}

/** A computation needs surfaces (e.g. a real-ray trace) but the part is a black box. */
export class NoPrescriptionError extends OpticsError {
	constructor(message: string) {
		super('no-prescription', message);
		this.name = 'NoPrescriptionError';
	}
}

/** Success with a value or failure with an `OpticsError`; never both, never NaN. */
export type Result<T> = { readonly ok: true; readonly value: T } | { readonly ok: false; readonly error: OpticsError };

/** Wraps a value as a successful `Result`. */
export function ok<T>(value: T): Result<T> {
	return { ok: true, value };
}

/** Wraps an error as a failed `Result`. */
export function fail<T>(error: OpticsError): Result<T> {
	return { ok: false, error };
}
