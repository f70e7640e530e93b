// Sign-in throttling: how long a key (an account or a client address) must wait before its next
// sign-in attempt, from how many attempts failed in a row and when the last one was made.
// A few failures are free; after that the wait doubles with each further failure, up to a cap,
// and failures are forgotten after a quiet window. Pure: the database side is server/auth/throttle.ts.

export interface ThrottlePolicy {
	/** Failures allowed without any wait. */
	freeFailures: number;
	/** Wait after the first failure beyond the free ones; doubles with each further failure. */
	baseDelaySeconds: number;
	maxDelaySeconds: number;
	/** Failures older than this (counted from the last one) are forgotten. */
	windowSeconds: number;
}

/** Per account (the e-mail typed, whether or not such an account exists): 5 free failures. */
export const ACCOUNT_POLICY: ThrottlePolicy = { freeFailures: 5, baseDelaySeconds: 30, maxDelaySeconds: 15 * 60, windowSeconds: 60 * 60 };

/**
 * Per client address: more free failures, because a district office or a state agency often signs in
 * many people from one address, but the same growth once they are spent.
 */
export const IP_POLICY: ThrottlePolicy = { freeFailures: 20, baseDelaySeconds: 30, maxDelaySeconds: 15 * 60, windowSeconds: 60 * 60 };

export interface ThrottleState {
	failures: number;
	lastFailureAt: Date;
}

/** Seconds a key must wait after its `failures`-th failure in a row. */
export function delayAfter(failures: number, policy: ThrottlePolicy): number {
	if (failures < policy.freeFailures) return 0;
	const steps = failures - policy.freeFailures;
	// 2^steps overflows nothing here: the cap is reached long before steps gets large.
	return Math.min(policy.maxDelaySeconds, policy.baseDelaySeconds * 2 ** Math.min(steps, 30));
}

function quiet(state: ThrottleState, now: Date, policy: ThrottlePolicy): boolean {
	return (now.getTime() - state.lastFailureAt.getTime()) / 1000 >= policy.windowSeconds;
}

/** Whole seconds until the key may try again; 0 when it may try now. */
export function retryAfterSeconds(state: ThrottleState | null, now: Date, policy: ThrottlePolicy): number {
	if (!state || state.failures <= 0 || quiet(state, now, policy)) return 0;
	const elapsed = (now.getTime() - state.lastFailureAt.getTime()) / 1000;
	return Math.max(0, Math.ceil(delayAfter(state.failures, policy) - elapsed));
}

/** The failure count after one more failed attempt now (a quiet window starts a fresh count). */
export function failuresAfterAnother(state: ThrottleState | null, now: Date, policy: ThrottlePolicy): number {
	if (!state || quiet(state, now, policy)) return 1;
	return state.failures + 1;
}

/** "30 seconds", "2 minutes", "15 minutes": how a wait reads in a message. */
export function describeWait(seconds: number): string {
	if (seconds < 60) return `${seconds} second${seconds === 1 ? '' : 's'}`;
	const minutes = Math.ceil(seconds / 60);
	return `${minutes} minute${minutes === 1 ? '' : 's'}`;
}
