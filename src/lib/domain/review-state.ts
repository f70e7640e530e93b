// Where a flagged record stands in the review queue after a new version of it arrives.
//
// A manager's `verified` decision accepts the warnings the decided version carried; a `returned` decision
// accepts none (the district was asked to correct the record). A new version re-opens review only if it
// brings warnings no `verified` decision accepted; a version with only accepted warnings stays verified;
// one without warnings leaves the queue (`cleared`). A returned record's new version always ends the return.

export type QueueStatus = 'open' | 'verified' | 'returned' | 'cleared';

export interface WarningLike {
	code: string;
	column: string | null;
}

/** The identity of a warning across versions: its code and column (values may change, the issue is the same). */
export function warningKey(w: WarningLike): string {
	return `${w.code}|${w.column ?? ''}`;
}

export function uniqueWarningKeys(ws: readonly WarningLike[]): string[] {
	return [...new Set(ws.map(warningKey))].sort();
}

/**
 * The queue status for a record's new version, or null when it has no warnings and was never queued.
 * `accepted` holds the warning keys of every earlier `verified` decision on the record.
 */
export function statusAfterNewVersion(
	warningKeys: readonly string[],
	accepted: ReadonlySet<string>,
	wasQueued: boolean
): QueueStatus | null {
	if (warningKeys.length === 0) return wasQueued ? 'cleared' : null;
	return warningKeys.some((k) => !accepted.has(k)) ? 'open' : 'verified';
}
