// The retry schedule of the CLI: exponential steps with equal jitter, a cap, and Retry-After honoured.
// Backoff with jitter as described in RFC 9110 §10.2.3 (Retry-After) and common practice ("equal jitter":
// half the step fixed, half random) — the constants are our own choice, not from a source.
import { describe, expect, it } from 'vitest';
import { backoffCeiling, backoffDelay, backoffSchedule, parseRetryAfter, type BackoffPolicy } from '../../cli/backoff';

const policy: BackoffPolicy = { retries: 6, baseMs: 1000, maxMs: 20_000 };

describe('backoff schedule', () => {
	it('doubles each step and stops at the cap', () => {
		expect([0, 1, 2, 3, 4, 5].map((a) => backoffCeiling(policy, a))).toEqual([1000, 2000, 4000, 8000, 16_000, 20_000]);
	});

	it('each wait lies between half the step and the whole step', () => {
		for (let a = 0; a < 6; a++) {
			const c = backoffCeiling(policy, a);
			expect(backoffDelay(policy, a, null, () => 0)).toBe(c / 2);
			expect(backoffDelay(policy, a, null, () => 0.999999)).toBe(Math.round(c / 2 + 0.999999 * (c / 2)));
			for (let i = 0; i < 50; i++) {
				const d = backoffDelay(policy, a);
				expect(d).toBeGreaterThanOrEqual(c / 2);
				expect(d).toBeLessThanOrEqual(c);
			}
		}
	});

	it('jitter spreads the waits of many clients', () => {
		const seen = new Set(Array.from({ length: 200 }, () => backoffDelay(policy, 3)));
		expect(seen.size).toBeGreaterThan(50);
	});

	it('a schedule has one wait per retry and never exceeds the cap', () => {
		const s = backoffSchedule(policy, () => 0.5);
		expect(s).toEqual([750, 1500, 3000, 6000, 12_000, 15_000]);
		expect(backoffSchedule({ ...policy, retries: 0 })).toEqual([]);
	});

	it('a longer Retry-After wins, capped at maxMs; a shorter one does not shorten the wait', () => {
		expect(backoffDelay(policy, 0, 5000, () => 0)).toBe(5000);
		expect(backoffDelay(policy, 0, 60_000, () => 0)).toBe(20_000);
		expect(backoffDelay(policy, 2, 10, () => 0)).toBe(2000);
	});
});

describe('Retry-After (RFC 9110 §10.2.3)', () => {
	const now = Date.parse('2026-12-01T12:00:00Z');
	it('reads delay-seconds', () => {
		expect(parseRetryAfter('0', now)).toBe(0);
		expect(parseRetryAfter('5', now)).toBe(5000);
		expect(parseRetryAfter(' 120 ', now)).toBe(120_000);
	});
	it('reads an HTTP-date (IMF-fixdate), in the past meaning now', () => {
		expect(parseRetryAfter('Tue, 01 Dec 2026 12:00:30 GMT', now)).toBe(30_000);
		expect(parseRetryAfter('Tue, 01 Dec 2026 11:00:00 GMT', now)).toBe(0);
	});
	it('ignores anything else', () => {
		for (const v of [undefined, null, '', '-1', '1.5', 'soon', '12abc']) expect(parseRetryAfter(v as string, now)).toBeNull();
	});
});
