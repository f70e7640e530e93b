// The default Idempotency-Key of an upload: derived from who it is for (the district), what is sent
// (the file's SHA-256) and how (mode, sheet), so re-running the same night's upload (after a crash, a
// dropped connection or a retry by cron) sends the same key and the hub answers with the batch it
// already has instead of making a second one. A different file, mode or sheet gives a different key.
import { createHash } from 'node:crypto';

export interface KeyInput {
	/** The district code (`--district`) or, for a district token, `id<district_id>`. */
	district: string;
	mode: string;
	sha256: string;
	sheet?: string | null;
}

const SAFE = /[^A-Za-z0-9_-]/g;

/** `runnel-cli.v1.<district>.<mode>.<sha256>[.sheet-<12 hex>]`: visible ASCII, at most 255 characters. */
export function deriveIdempotencyKey({ district, mode, sha256, sheet }: KeyInput): string {
	if (!/^[0-9a-f]{64}$/.test(sha256)) throw new Error('sha256 must be 64 lowercase hex digits');
	const d = district.replace(SAFE, '_').slice(0, 64) || '_';
	const m = mode.replace(SAFE, '_').slice(0, 16);
	const s = sheet ? `.sheet-${createHash('sha256').update(sheet, 'utf8').digest('hex').slice(0, 12)}` : '';
	return `runnel-cli.v1.${d}.${m}.${sha256}${s}`;
}

/** A key the user gave with --idempotency-key: 1–255 visible ASCII characters (as the hub requires). */
export function isValidIdempotencyKey(key: string): boolean {
	return /^[\x21-\x7e]{1,255}$/.test(key);
}
