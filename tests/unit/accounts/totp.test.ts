import { describe, expect, it } from 'vitest';
import {
	base32Of,
	codeAt,
	decryptSecret,
	encryptSecret,
	matchingStep,
	normaliseCode,
	otpauthUri,
	stepAt
} from '../../../src/lib/server/auth/totp';
import { isHalfSignedInPath, secondFactorPageFor } from '../../../src/lib/server/auth/public-paths';

/** The ASCII secret "12345678901234567890" of the RFC test vectors (HMAC-SHA-1). */
const RFC_SECRET = new TextEncoder().encode('12345678901234567890');

describe('TOTP codes', () => {
	it('match the SHA-1 test vectors of RFC 6238 (2011), Appendix B (last 6 of the 8 digits)', () => {
		// RFC 6238 (2011), Appendix B, mode SHA1: time (s) → 8-digit TOTP. A 6-digit code is the same
		// truncated value modulo 10^6 (RFC 4226, section 5.3), i.e. its last 6 digits.
		const vectors: [number, string][] = [
			[59, '94287082'],
			[1111111109, '07081804'],
			[1111111111, '14050471'],
			[1234567890, '89005924'],
			[2000000000, '69279037'],
			[20000000000, '65353130']
		];
		for (const [seconds, code] of vectors) expect(codeAt(RFC_SECRET, seconds * 1000), `T = ${seconds}`).toBe(code.slice(-6));
	});

	it('match the HOTP values of RFC 4226 (2005), Appendix D, at step = counter', () => {
		// RFC 4226 (2005), Appendix D: counts 0..9 → 6-digit HOTP; TOTP at step c is HOTP with counter c.
		const hotp = ['755224', '287082', '359152', '969429', '338314', '254676', '287922', '162583', '399871', '520489'];
		hotp.forEach((code, count) => expect(codeAt(RFC_SECRET, count * 30_000 + 5_000), `count ${count}`).toBe(code));
	});

	it('accepts the codes of one step before and after, and says which step matched', () => {
		const now = 1_700_000_015_000;
		const step = stepAt(now);
		expect(step).toBe(Math.floor(now / 30_000)); // RFC 6238 (2011), section 4.2: T = floor((now - T0) / X)
		for (const delta of [-1, 0, 1]) expect(matchingStep(RFC_SECRET, codeAt(RFC_SECRET, now + delta * 30_000), now)).toBe(step + delta);
		for (const delta of [-3, -2, 2, 3]) {
			const code = codeAt(RFC_SECRET, now + delta * 30_000);
			const near = [-1, 0, 1].map((d) => codeAt(RFC_SECRET, now + d * 30_000));
			if (!near.includes(code)) expect(matchingStep(RFC_SECRET, code, now), `delta ${delta}`).toBeNull();
		}
		expect(matchingStep(RFC_SECRET, '12345', now)).toBeNull();
	});

	it('reads typed codes with spaces, refuses anything else', () => {
		expect(normaliseCode('123 456')).toBe('123456');
		expect(normaliseCode(' 123456 ')).toBe('123456');
		for (const bad of ['12345', '1234567', 'abcdef', '12345x', '']) expect(normaliseCode(bad)).toBeNull();
	});
});

describe('the secret as shown and stored', () => {
	it('is shown in base32 as RFC 4648 (2006), section 10 encodes it (without padding)', () => {
		// RFC 4648 (2006), section 10: BASE32("foobar") = "MZXW6YTBOI======"
		expect(base32Of(new TextEncoder().encode('foobar'))).toBe('MZXW6YTBOI');
	});

	it('goes into an otpauth:// address with issuer Glasscrib, the e-mail and the RFC 6238 defaults', () => {
		const uri = new URL(otpauthUri(RFC_SECRET, 'ada@tarnwell.example'));
		expect(uri.protocol).toBe('otpauth:');
		expect(decodeURIComponent(uri.pathname)).toContain('Glasscrib:ada@tarnwell.example');
		expect(uri.searchParams.get('issuer')).toBe('Glasscrib');
		expect(uri.searchParams.get('secret')).toBe(base32Of(RFC_SECRET));
		expect(uri.searchParams.get('algorithm')).toBe('SHA1');
		expect(uri.searchParams.get('digits')).toBe('6');
		expect(uri.searchParams.get('period')).toBe('30');
	});

	it('is stored encrypted: round trip, fresh IV each time, bound to the user and the pepper', () => {
		const pepper = 'unit-test-pepper';
		const a = encryptSecret(RFC_SECRET, 7, pepper);
		const b = encryptSecret(RFC_SECRET, 7, pepper);
		expect(a).not.toBe(b);
		expect(a).toMatch(/^[A-Za-z0-9_-]+$/);
		expect(Buffer.from(a, 'base64url')).toHaveLength(12 + 16 + 20);
		expect(a).not.toContain(base32Of(RFC_SECRET));
		expect(decryptSecret(a, 7, pepper)).toEqual(RFC_SECRET);
		expect(() => decryptSecret(a, 8, pepper)).toThrow();
		expect(() => decryptSecret(a, 7, 'another-pepper')).toThrow();
		const raw = Buffer.from(a, 'base64url');
		raw[raw.length - 1] ^= 1;
		expect(() => decryptSecret(raw.toString('base64url'), 7, pepper)).toThrow();
		expect(() => encryptSecret(RFC_SECRET, 7, undefined)).toThrow(/AUTH_PEPPER/);
	});
});

describe('half-signed-in sessions', () => {
	it('reach only the code page, sign-out and assets', () => {
		for (const [path, method] of [['/signin/code', 'GET'], ['/signin/code', 'POST'], ['/signout', 'POST'], ['/api/v1/session/second-factor', 'POST'], ['/api/v1/session', 'DELETE'], ['/_app/immutable/x.js', 'GET']])
			expect(isHalfSignedInPath(path, method), `${method} ${path}`).toBe(true);
		for (const [path, method] of [['/', 'GET'], ['/account', 'GET'], ['/admin/users', 'GET'], ['/api/v1/me', 'GET'], ['/api/v1/session', 'POST'], ['/signin', 'GET'], ['/api/v1/session/second-factor', 'GET']])
			expect(isHalfSignedInPath(path, method), `${method} ${path}`).toBe(false);
	});

	it('are sent to the code page keeping only a local place to go on to', () => {
		const at = (p: string) => secondFactorPageFor(new URL(p, 'http://127.0.0.1'));
		expect(at('/parts?q=lens')).toBe('/signin/code?redirectTo=%2Fparts%3Fq%3Dlens');
		expect(at('/')).toBe('/signin/code');
		expect(at('/signin?redirectTo=%2Fstock')).toBe('/signin/code?redirectTo=%2Fstock');
		expect(at('/signin?redirectTo=%2F%2Fevil.example')).toBe('/signin/code');
	});
});
