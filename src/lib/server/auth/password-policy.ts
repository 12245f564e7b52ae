/**
 * What a new password must be: 12 to 128 characters (counted as Unicode code points, so an emoji is
 * one), any characters, no composition rules, and not one of a short bundled list of passwords that
 * are far too common (our own list of obvious choices; no downloaded list).
 */
import { z } from 'zod';
import { PASSWORD_MAX, PASSWORD_MIN } from './password';

const TOO_COMMON = new Set([
	'password1234', 'password12345', 'password123456', 'password123!', 'passwordpassword', 'password1234!',
	'123456789012', '1234567890123', '12345678901234', '123456123456', '123123123123', '111111111111',
	'000000000000', '987654321098', 'qwertyuiopas', 'qwerty123456', 'qwertyqwerty', 'qwerty1234567',
	'asdfghjklqwe', 'asdfasdfasdf', 'zxcvbnm12345', '1q2w3e4r5t6y', 'abcdefghijkl', 'abc123abc123',
	'abcd1234abcd', 'iloveyou1234', 'letmein12345', 'letmeinletmein', 'welcome12345', 'welcome123456',
	'welcomewelcome', 'changeme1234', 'changemechangeme', 'administrator', 'administrator1', 'admin1234567',
	'adminadminadmin', 'trustno1trustno1', 'monkey123456', 'football1234', 'baseball1234', 'sunshine1234',
	'princess1234', 'dragon123456', 'superman1234', 'starwars1234', 'whatever1234', 'mypassword123',
	'secretpassword', 'glasscrib123', 'glasscrib1234', 'glasscrib2026', 'tarnwell1234', 'opticslab123'
]);

/** A reason the password is refused, or null when it is fine. */
export function passwordProblem(password: string, email?: string): string | null {
	const length = [...password].length;
	if (length < PASSWORD_MIN) return `Use at least ${PASSWORD_MIN} characters.`;
	if (length > PASSWORD_MAX) return `Use at most ${PASSWORD_MAX} characters.`;
	const lower = password.toLowerCase();
	if (TOO_COMMON.has(lower)) return 'This password is far too common; choose another.';
	if (new Set([...password]).size === 1) return 'A single repeated character is too easy to guess.';
	if (email && lower === email.toLowerCase()) return 'Do not use your e-mail address as the password.';
	return null;
}

/** The zod rule for a new password (the same check as passwordProblem). */
export const newPasswordSchema = z.string().superRefine((value, ctx) => {
	const problem = passwordProblem(value);
	if (problem) ctx.addIssue({ code: 'custom', message: problem });
});

/** New password and its repetition, as on the set-password and change-password forms. */
export const newPasswordPairSchema = z
	.object({ password: newPasswordSchema, confirm: z.string() })
	.strict()
	.refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords differ.' });
