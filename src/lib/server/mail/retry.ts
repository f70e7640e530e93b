// What the sender does after a failed attempt: retry later with exponential backoff, or give up.
// Pure policy, unit-tested.

/** First retry after 30 s, then ×4 each time (30 s, 2 min, 8 min, 32 min, 2 h 8 min…), at most 6 h. */
export const FIRST_RETRY_SECONDS = 30;
export const BACKOFF_FACTOR = 4;
export const MAX_RETRY_SECONDS = 6 * 3600;

/**
 * Seconds to wait after attempt number `attempts` (1 = the first attempt failed). `jitter` in [0, 1)
 * spreads retries of many messages by up to ±10 % so they do not all hit the relay at once.
 */
export function retryDelaySeconds(attempts: number, jitter = 0.5): number {
	const n = Math.max(1, Math.floor(attempts));
	const base = Math.min(MAX_RETRY_SECONDS, FIRST_RETRY_SECONDS * BACKOFF_FACTOR ** (n - 1));
	return Math.round(base * (0.9 + 0.2 * Math.min(Math.max(jitter, 0), 1)));
}

/**
 * A permanent SMTP failure (RFC 5321 §4.2.1: a 5yz reply, e.g. 550 mailbox unavailable) will fail the
 * same way again; transient ones (4yz replies, refused connections, timeouts) are worth retrying.
 */
export function isPermanentSmtpFailure(err: unknown): boolean {
	const code = (err as { responseCode?: unknown } | null)?.responseCode;
	return typeof code === 'number' && code >= 500 && code < 600;
}

export type AfterFailure = { status: 'failed' } | { status: 'queued'; retryInSeconds: number };

/** The message's next state after attempt number `attempts` failed with `err`. */
export function afterFailure(attempts: number, maxAttempts: number, err: unknown, jitter = 0.5): AfterFailure {
	if (isPermanentSmtpFailure(err) || attempts >= maxAttempts) return { status: 'failed' };
	return { status: 'queued', retryInSeconds: retryDelaySeconds(attempts, jitter) };
}

/** A one-line, bounded description of a send error for the outbox. */
export function describeSmtpError(err: unknown): string {
	const e = err as { message?: string; code?: string; responseCode?: number; response?: string } | null;
	const parts: string[] = [];
	if (e?.responseCode) parts.push(`SMTP ${e.responseCode}`);
	if (e?.code) parts.push(e.code);
	const msg = e?.response ?? e?.message ?? String(err);
	parts.push(msg.replace(/\s+/g, ' ').trim());
	return parts.join(': ').slice(0, 500);
}
