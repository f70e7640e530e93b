// Sign-in throttling rules. The thresholds are our own choice (common practice, no published value),
// kept well inside NIST SP 800-63B "Digital Identity Guidelines: Authentication and Lifecycle
// Management" (NIST, 2017), §5.2.2 Rate Limiting: no more than 100 consecutive failed attempts on one
// account. With 5 free failures and a doubling wait from 30 s (cap 15 min), an hour allows ≈ 12.
import { describe, expect, it } from 'vitest';
import {
	ACCOUNT_POLICY,
	delayAfter,
	describeWait,
	failuresAfterAnother,
	IP_POLICY,
	retryAfterSeconds,
	type ThrottlePolicy
} from '../../src/lib/domain/sign-in-throttle';

const t0 = new Date('2026-03-01T12:00:00Z');
const at = (s: number) => new Date(t0.getTime() + s * 1000);

describe('delay after n failures', () => {
	it('five failures are free; the sixth attempt waits 30 s, then the wait doubles up to 15 minutes', () => {
		expect([0, 1, 2, 3, 4].map((n) => delayAfter(n, ACCOUNT_POLICY))).toEqual([0, 0, 0, 0, 0]);
		expect([5, 6, 7, 8, 9, 10, 11, 20, 500].map((n) => delayAfter(n, ACCOUNT_POLICY))).toEqual([30, 60, 120, 240, 480, 900, 900, 900, 900]);
	});

	it('a client address gets more free failures (shared offices) but the same growth', () => {
		expect(delayAfter(19, IP_POLICY)).toBe(0);
		expect(delayAfter(20, IP_POLICY)).toBe(30);
		expect(delayAfter(21, IP_POLICY)).toBe(60);
	});
});

describe('retry-after', () => {
	it('nothing recorded, or failures below the threshold: try now', () => {
		expect(retryAfterSeconds(null, t0, ACCOUNT_POLICY)).toBe(0);
		expect(retryAfterSeconds({ failures: 4, lastFailureAt: t0 }, t0, ACCOUNT_POLICY)).toBe(0);
	});

	it('counts down from the last failure, rounding up to whole seconds', () => {
		const s = { failures: 5, lastFailureAt: t0 };
		expect(retryAfterSeconds(s, t0, ACCOUNT_POLICY)).toBe(30);
		expect(retryAfterSeconds(s, at(10.2), ACCOUNT_POLICY)).toBe(20);
		expect(retryAfterSeconds(s, at(29.5), ACCOUNT_POLICY)).toBe(1);
		expect(retryAfterSeconds(s, at(30), ACCOUNT_POLICY)).toBe(0);
	});

	it('failures older than the quiet window are forgotten', () => {
		const s = { failures: 50, lastFailureAt: t0 };
		expect(retryAfterSeconds(s, at(899), ACCOUNT_POLICY)).toBe(1);
		expect(retryAfterSeconds(s, at(3600), ACCOUNT_POLICY)).toBe(0);
		expect(failuresAfterAnother(s, at(3600), ACCOUNT_POLICY)).toBe(1);
		expect(failuresAfterAnother(s, at(3599), ACCOUNT_POLICY)).toBe(51);
	});

	it('an attacker trying non-stop gets at most a handful of guesses per hour', () => {
		// Simulate: try whenever allowed, always fail.
		let state: { failures: number; lastFailureAt: Date } | null = null;
		let guesses = 0;
		for (let s = 0; s < 3600; s++) {
			const now = at(s);
			if (retryAfterSeconds(state, now, ACCOUNT_POLICY) > 0) continue;
			state = { failures: failuresAfterAnother(state, now, ACCOUNT_POLICY), lastFailureAt: now };
			guesses++;
		}
		// 5 free + waits of 30+60+120+240+480 s, then one every 900 s.
		expect(guesses).toBe(12);
		expect(guesses).toBeLessThan(100); // NIST SP 800-63B §5.2.2
	});

	it('a policy with no free failures throttles from the first', () => {
		const strict: ThrottlePolicy = { freeFailures: 0, baseDelaySeconds: 1, maxDelaySeconds: 8, windowSeconds: 60 };
		expect([0, 1, 2, 3, 4, 5].map((n) => delayAfter(n, strict))).toEqual([1, 2, 4, 8, 8, 8]);
	});
});

describe('how a wait reads', () => {
	it('seconds under a minute, whole minutes (rounded up) above', () => {
		expect(describeWait(1)).toBe('1 second');
		expect(describeWait(30)).toBe('30 seconds');
		expect(describeWait(60)).toBe('1 minute');
		expect(describeWait(61)).toBe('2 minutes');
		expect(describeWait(900)).toBe('15 minutes');
	});
});
