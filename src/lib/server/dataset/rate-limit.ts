// Per-token rate limit for the dataset API: a fixed window of DATASET_RATE_LIMIT requests (default 60) per
// DATASET_RATE_WINDOW_SECONDS (default 60) for each credential. Answers carry the RateLimit-Limit /
// -Remaining / -Reset fields (IETF httpapi RateLimit header fields draft); over the limit: 429 problem with
// Retry-After. The window lives in this process's memory: behind a load balancer each app server counts
// its own share (documented in DEVELOPERS.md).
import { ApiError } from '../http/problem';

interface Window {
	start: number;
	used: number;
}
const windows = new Map<string, Window>();

export function rateLimitConfig(): { limit: number; windowSeconds: number } {
	const limit = Number(process.env.DATASET_RATE_LIMIT ?? 60);
	const windowSeconds = Number(process.env.DATASET_RATE_WINDOW_SECONDS ?? 60);
	return { limit: Number.isInteger(limit) && limit > 0 ? limit : 60, windowSeconds: windowSeconds > 0 ? windowSeconds : 60 };
}

/** Counts one request for `key`; returns the headers to send, or throws the 429 problem. */
export function takeRateLimit(key: string, now = Date.now()): Record<string, string> {
	const { limit, windowSeconds } = rateLimitConfig();
	const ms = windowSeconds * 1000;
	let w = windows.get(key);
	if (!w || now - w.start >= ms) {
		w = { start: now, used: 0 };
		windows.set(key, w);
		if (windows.size > 10_000) for (const [k, v] of windows) if (now - v.start >= ms) windows.delete(k);
	}
	const reset = Math.max(1, Math.ceil((w.start + ms - now) / 1000));
	if (w.used >= limit) {
		throw new ApiError({
			status: 429,
			type: 'rate-limited',
			detail: `This token may make ${limit} dataset requests per ${windowSeconds} s; try again in ${reset} s.`,
			headers: {
				'retry-after': String(reset),
				'ratelimit-limit': String(limit),
				'ratelimit-remaining': '0',
				'ratelimit-reset': String(reset)
			}
		});
	}
	w.used++;
	return { 'ratelimit-limit': String(limit), 'ratelimit-remaining': String(limit - w.used), 'ratelimit-reset': String(reset) };
}
