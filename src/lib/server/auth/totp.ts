/**
 * Two-step sign-in codes: TOTP (RFC 6238) with the defaults authenticator apps use (HMAC-SHA-1,
 * 6 digits, 30-second steps), computed by the `otpauth` package. The shared secret is stored
 * encrypted: AES-256-GCM under a key derived with HKDF-SHA-256 from AUTH_PEPPER (info
 * 'glasscrib-totp'), the user id as additional data so a value cannot be moved to another user.
 * No database access here: `accounts/two-step.ts` uses these functions.
 */
import { createCipheriv, createDecipheriv, hkdfSync, randomBytes } from 'node:crypto';
import { Secret, TOTP } from 'otpauth';

export const TOTP_ISSUER = 'Glasscrib';
export const TOTP_PERIOD_S = 30;
export const TOTP_DIGITS = 6;
/** Codes of the step before and after the current one are accepted too (clock drift, typing time). */
export const TOTP_WINDOW = 1;
/** 20 random bytes (160 bits), the secret length RFC 4226 section 4 recommends. */
export const TOTP_SECRET_BYTES = 20;

const IV_BYTES = 12;
const TAG_BYTES = 16;

function keyFrom(pepper: string | undefined): Buffer {
	if (!pepper) throw new Error('AUTH_PEPPER is not set: two-step sign-in secrets cannot be encrypted without it');
	return Buffer.from(hkdfSync('sha256', pepper, Buffer.alloc(0), 'glasscrib-totp', 32));
}

const aad = (userId: number) => Buffer.from(`user:${userId}`);

/** A new random secret. */
export function newSecret(): Uint8Array {
	return new Uint8Array(randomBytes(TOTP_SECRET_BYTES));
}

/** Encrypts a secret for the user's row: base64url of iv (12 bytes), tag (16 bytes), ciphertext. */
export function encryptSecret(secret: Uint8Array, userId: number, pepper: string | undefined): string {
	const iv = randomBytes(IV_BYTES);
	const cipher = createCipheriv('aes-256-gcm', keyFrom(pepper), iv);
	cipher.setAAD(aad(userId));
	const body = Buffer.concat([cipher.update(secret), cipher.final()]);
	return Buffer.concat([iv, cipher.getAuthTag(), body]).toString('base64url');
}

/** Decrypts what encryptSecret stored; throws when the value was altered, belongs to another user or the pepper changed. */
export function decryptSecret(stored: string, userId: number, pepper: string | undefined): Uint8Array {
	const raw = Buffer.from(stored, 'base64url');
	if (raw.length <= IV_BYTES + TAG_BYTES) throw new Error('stored two-step secret is too short');
	const decipher = createDecipheriv('aes-256-gcm', keyFrom(pepper), raw.subarray(0, IV_BYTES));
	decipher.setAAD(aad(userId));
	decipher.setAuthTag(raw.subarray(IV_BYTES, IV_BYTES + TAG_BYTES));
	return new Uint8Array(Buffer.concat([decipher.update(raw.subarray(IV_BYTES + TAG_BYTES)), decipher.final()]));
}

function totpOf(secret: Uint8Array, label = 'account'): TOTP {
	return new TOTP({
		issuer: TOTP_ISSUER,
		label,
		secret: new Secret({ buffer: Uint8Array.from(secret).buffer }),
		algorithm: 'SHA1',
		digits: TOTP_DIGITS,
		period: TOTP_PERIOD_S
	});
}

/** The secret in base32 (RFC 4648), as authenticator apps take it when typed in. */
export function base32Of(secret: Uint8Array): string {
	return new Secret({ buffer: Uint8Array.from(secret).buffer }).base32;
}

/** The `otpauth://totp/...` address an authenticator app reads from the QR code. */
export function otpauthUri(secret: Uint8Array, email: string): string {
	return totpOf(secret, email).toString();
}

/** The time step (unix seconds / 30, rounded down) at a moment. */
export function stepAt(nowMs: number): number {
	return TOTP.counter({ period: TOTP_PERIOD_S, timestamp: nowMs });
}

/** The code of a secret at a moment (for tests and for nothing else in the app). */
export function codeAt(secret: Uint8Array, nowMs: number): string {
	return totpOf(secret).generate({ timestamp: nowMs });
}

/** A typed code without spaces, or null when it is not 6 digits. */
export function normaliseCode(input: string): string | null {
	const code = input.replace(/[\s-]/g, '');
	return /^\d{6}$/.test(code) ? code : null;
}

/**
 * The time step whose code matches, searching the current step and one on either side; null when
 * none matches. The caller refuses a step at or before the last accepted one (replay).
 */
export function matchingStep(secret: Uint8Array, code: string, nowMs: number): number | null {
	const delta = totpOf(secret).validate({ token: code, timestamp: nowMs, window: TOTP_WINDOW });
	return delta === null ? null : stepAt(nowMs) + delta;
}
