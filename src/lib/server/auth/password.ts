import { hash, verify } from '@node-rs/argon2';

/**
 * Argon2id with the OWASP-recommended minimum (m = 19456 KiB, t = 2, p = 1), set explicitly rather
 * than relying on the library's defaults. The pepper (AUTH_PEPPER) is Argon2's secret input.
 */
const PARAMS = { memoryCost: 19456, timeCost: 2, parallelism: 1, outputLen: 32 } as const;

export const PASSWORD_MIN = 12;
export const PASSWORD_MAX = 128;

function secret(pepper: string | undefined) {
	return pepper ? new TextEncoder().encode(pepper) : undefined;
}

/** Hashes a password; the result starts with `$argon2id$v=19$m=19456,t=2,p=1$`. */
export function hashPassword(password: string, pepper?: string): Promise<string> {
	return hash(password, { ...PARAMS, secret: secret(pepper) });
}

/** Checks a password against a stored hash; false on any mismatch or malformed hash. */
export async function verifyPassword(storedHash: string, password: string, pepper?: string): Promise<boolean> {
	try {
		return await verify(storedHash, password, { secret: secret(pepper) });
	} catch {
		return false;
	}
}
