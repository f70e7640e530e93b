// The sender's retry policy. The backoff numbers are our own choice (common practice for mail
// queues: minutes at first, hours later), not from a source; the permanent/transient split is
// RFC 5321 §4.2.1 (2yz success, 4yz transient negative, 5yz permanent negative completion).
import { describe, expect, it } from 'vitest';
import { afterFailure, describeSmtpError, isPermanentSmtpFailure, retryDelaySeconds } from '../../src/lib/server/mail/retry';

describe('retryDelaySeconds', () => {
	it('waits 30 s, then 4× longer each attempt, capped at 6 h (jitter at the midpoint)', () => {
		expect([1, 2, 3, 4, 5, 6, 7, 20].map((n) => retryDelaySeconds(n))).toEqual([30, 120, 480, 1920, 7680, 21600, 21600, 21600]);
	});
	it('spreads retries by at most ±10 %', () => {
		expect(retryDelaySeconds(2, 0)).toBe(108);
		expect(retryDelaySeconds(2, 0.999999)).toBe(132);
	});
});

describe('afterFailure', () => {
	const refused = Object.assign(new Error('connect ECONNREFUSED 127.0.0.1:1'), { code: 'ESOCKET' });
	const mailboxUnavailable = Object.assign(new Error('Can’t send mail - all recipients were rejected'), { responseCode: 550 });
	const tryLater = Object.assign(new Error('Greylisted'), { responseCode: 451 });

	it('retries transient failures until the last attempt', () => {
		expect(afterFailure(1, 3, refused)).toEqual({ status: 'queued', retryInSeconds: 30 });
		expect(afterFailure(2, 3, tryLater)).toEqual({ status: 'queued', retryInSeconds: 120 });
		expect(afterFailure(3, 3, refused)).toEqual({ status: 'failed' });
	});
	it('gives up at once on a 5yz reply', () => {
		expect(isPermanentSmtpFailure(mailboxUnavailable)).toBe(true);
		expect(isPermanentSmtpFailure(tryLater)).toBe(false);
		expect(isPermanentSmtpFailure(refused)).toBe(false);
		expect(afterFailure(1, 6, mailboxUnavailable)).toEqual({ status: 'failed' });
	});
	it('describes errors in one bounded line', () => {
		expect(describeSmtpError(refused)).toBe('ESOCKET: connect ECONNREFUSED 127.0.0.1:1');
		expect(describeSmtpError(Object.assign(new Error('x'), { responseCode: 550, response: '550 5.1.1 <a@b>:\n user unknown' }))).toBe(
			'SMTP 550: 550 5.1.1 <a@b>: user unknown'
		);
		expect(describeSmtpError(new Error('y'.repeat(2000))).length).toBe(500);
	});
});
