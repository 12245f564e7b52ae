import { describe, expect, it } from 'vitest';
import { buckets, waitText } from '../../../src/lib/server/auth/throttle';
import { safeRedirect } from '../../../src/lib/server/accounts/signin';

describe('throttle helpers', () => {
	it('names buckets per account (case-insensitive) and per address', () => {
		expect(buckets.account(' Admin@Tarnwell.example ')).toBe('account:admin@tarnwell.example');
		expect(buckets.ip('127.0.0.1')).toBe('ip:127.0.0.1');
		expect(buckets.account('a'.repeat(400)).length).toBe(300);
	});
	it('words the waiting time', () => {
		expect(waitText(1)).toBe('1 second');
		expect(waitText(45)).toBe('45 seconds');
		expect(waitText(14 * 60 + 5)).toBe('15 minutes');
	});
});

describe('redirect after sign-in', () => {
	it('only follows local paths', () => {
		expect(safeRedirect('/parts?q=1')).toBe('/parts?q=1');
		expect(safeRedirect('//evil.example')).toBe('/');
		expect(safeRedirect('/\\evil.example')).toBe('/');
		expect(safeRedirect('https://evil.example')).toBe('/');
		expect(safeRedirect(null)).toBe('/');
	});
});
