// Where sign-in may send someone back to. The attack patterns are the open-redirect cases of the
// OWASP "Unvalidated Redirects and Forwards Cheat Sheet" (OWASP Cheat Sheet Series) and of WHATWG URL
// parsing (backslashes and tab/newline stripping in special schemes, URL Standard §4.4).
import { describe, expect, it } from 'vitest';
import { safeNextPath } from '../../src/lib/domain/safe-redirect';

describe('safeNextPath', () => {
	it('keeps local paths with their query and fragment', () => {
		expect(safeNextPath('/account')).toBe('/account');
		expect(safeNextPath('/admin/audit?user=3&action=sign-in#top')).toBe('/admin/audit?user=3&action=sign-in#top');
		expect(safeNextPath('/a/../admin/users')).toBe('/admin/users');
	});

	it.each([
		['//evil.example/x'],
		['///evil.example'],
		['/\\evil.example'],
		['\\\\evil.example'],
		['https://evil.example/'],
		['http:evil.example'],
		['javascript:alert(1)'],
		['/\tevil'],
		['/\n/evil.example'],
		['evil.example'],
		[''],
		[' /account']
	])('refuses %j', (next) => {
		expect(safeNextPath(next)).toBe('/');
	});

	it('does not send anyone back into signing in or out', () => {
		expect(safeNextPath('/sign-in?next=/account')).toBe('/');
		expect(safeNextPath('/sign-out')).toBe('/');
		expect(safeNextPath('/sign-in-help')).toBe('/sign-in-help');
	});

	it('uses the fallback for missing or huge values', () => {
		expect(safeNextPath(null, '/home')).toBe('/home');
		expect(safeNextPath(undefined)).toBe('/');
		expect(safeNextPath('/' + 'a'.repeat(3000))).toBe('/');
	});
});
