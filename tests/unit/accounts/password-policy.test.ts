import { describe, expect, it } from 'vitest';
import { passwordProblem, newPasswordPairSchema } from '../../../src/lib/server/auth/password-policy';
import { hashPassword, verifyPassword } from '../../../src/lib/server/auth/password';

// Figures from OWASP ASVS 4.0.3, V2.1.1-2.1.9 (12-128 characters, any Unicode, no composition rules,
// refuse common passwords) and V2.4.1 (Argon2id parameters, OWASP Password Storage Cheat Sheet).
describe('new password rules', () => {
	it('refuses 11 and 129 characters, accepts 12 and 128', () => {
		expect(passwordProblem('a'.repeat(10) + 'bc')).toBeNull();
		expect(passwordProblem('abcdefghijk')).toMatch(/at least 12/);
		expect(passwordProblem('ab'.repeat(64))).toBeNull();
		expect(passwordProblem('ab'.repeat(64) + 'c')).toMatch(/at most 128/);
	});

	it('counts Unicode characters, not bytes or UTF-16 units, and accepts emoji and spaces', () => {
		const emoji = '🔭🔬💡🪞🔦📐📏🧪🧲🔧🔩🪛'; // 12 code points, 24 UTF-16 units
		expect([...emoji].length).toBe(12);
		expect(passwordProblem(emoji)).toBeNull();
		expect(passwordProblem('🔭'.repeat(6) + '🔬'.repeat(5))).toMatch(/at least 12/);
		expect(passwordProblem('drei linsen auf dem tisch')).toBeNull();
	});

	it('refuses very common passwords (any case), a single repeated character and the e-mail address', () => {
		expect(passwordProblem('password1234')).toMatch(/too common/);
		expect(passwordProblem('PassWord1234')).toMatch(/too common/);
		expect(passwordProblem('qwerty123456')).toMatch(/too common/);
		expect(passwordProblem('xxxxxxxxxxxxxxx')).toMatch(/repeated/);
		expect(passwordProblem('noor@tarnwell.example', 'Noor@Tarnwell.example')).toMatch(/e-mail/);
	});

	it('checks the repetition of the new password', () => {
		const r = newPasswordPairSchema.safeParse({ password: 'lens tissue and gloves', confirm: 'lens tissue and glove' });
		expect(r.success).toBe(false);
		expect(r.error?.issues[0].path).toEqual(['confirm']);
		expect(newPasswordPairSchema.safeParse({ password: 'lens tissue and gloves', confirm: 'lens tissue and gloves' }).success).toBe(true);
	});
});

describe('password hashing', () => {
	it('uses Argon2id with m=19456 KiB, t=2, p=1 and a random salt; the pepper is required to verify', async () => {
		const a = await hashPassword('a long enough password', 'pepper-1');
		const b = await hashPassword('a long enough password', 'pepper-1');
		expect(a.startsWith('$argon2id$v=19$m=19456,t=2,p=1$')).toBe(true);
		expect(a).not.toBe(b);
		expect(await verifyPassword(a, 'a long enough password', 'pepper-1')).toBe(true);
		expect(await verifyPassword(a, 'a long enough password')).toBe(false);
		expect(await verifyPassword(a, 'a long enough passwor', 'pepper-1')).toBe(false);
		const long = 'p'.repeat(50) + 'q'.repeat(50);
		const h = await hashPassword(long, 'x');
		expect(await verifyPassword(h, long.slice(0, 99), 'x')).toBe(false);
	});
});
