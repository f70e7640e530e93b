// Retry waits: exponential backoff with "equal jitter" (half the exponential step fixed, half random),
// so many district scripts started by cron at the same minute do not retry in lockstep, and a server's
// Retry-After (RFC 9110 §10.2.3: delay-seconds or an HTTP-date) is honoured when it asks for longer.
// Pure: the clock and the random source are parameters.

export interface BackoffPolicy {
	/** Retries after the first attempt (so at most retries + 1 attempts). */
	retries: number;
	/** The first step, in milliseconds; step n is base × 2ⁿ. */
	baseMs: number;
	/** No single wait is longer than this, not even one a Retry-After asks for. */
	maxMs: number;
}

export const DEFAULT_BACKOFF: BackoffPolicy = { retries: 5, baseMs: 1000, maxMs: 60_000 };

/** The exponential step of retry number `attempt` (0 for the first retry), capped at maxMs. */
export function backoffCeiling(policy: BackoffPolicy, attempt: number): number {
	return Math.min(policy.maxMs, policy.baseMs * 2 ** Math.max(0, attempt));
}

/** The wait before retry `attempt`: between half the step and the whole step, then at least Retry-After. */
export function backoffDelay(
	policy: BackoffPolicy,
	attempt: number,
	retryAfterMs: number | null = null,
	random: () => number = Math.random
): number {
	const ceiling = backoffCeiling(policy, attempt);
	const jittered = ceiling / 2 + random() * (ceiling / 2);
	const wanted = retryAfterMs !== null && retryAfterMs > jittered ? retryAfterMs : jittered;
	return Math.round(Math.min(policy.maxMs, Math.max(0, wanted)));
}

/** The waits of a whole retry schedule (for `--help`-style explanations and tests). */
export function backoffSchedule(policy: BackoffPolicy, random: () => number = Math.random): number[] {
	return Array.from({ length: policy.retries }, (_, i) => backoffDelay(policy, i, null, random));
}

/**
 * Parses a Retry-After header value into milliseconds from `now`: delay-seconds (a non-negative integer)
 * or an HTTP-date. Anything else (or a date in the past) gives null.
 */
export function parseRetryAfter(value: string | null | undefined, now: number = Date.now()): number | null {
	if (value === null || value === undefined) return null;
	const v = value.trim();
	if (/^\d+$/.test(v)) return Number(v) * 1000;
	if (!/[a-z]/i.test(v)) return null;
	const at = Date.parse(v);
	if (Number.isNaN(at)) return null;
	const ms = at - now;
	return ms > 0 ? ms : 0;
}
