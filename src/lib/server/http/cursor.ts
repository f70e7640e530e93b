// Opaque cursors for keyset pagination: clients pass back what `next` gave them and never parse it.
import { ApiError } from './problem';

export function encodeCursor(value: Record<string, string | number>): string {
	return Buffer.from(JSON.stringify(value), 'utf8').toString('base64url');
}

export function decodeCursor(cursor: string | null): Record<string, unknown> | null {
	if (!cursor) return null;
	try {
		const v = JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8'));
		if (v && typeof v === 'object' && !Array.isArray(v)) return v as Record<string, unknown>;
	} catch {
		/* fall through */
	}
	throw new ApiError({
		status: 400,
		type: 'invalid-cursor',
		detail: 'The cursor is not one this API gave out.',
		errors: [{ pointer: '#/query/cursor', detail: 'Unknown cursor.' }]
	});
}

/** `limit` query parameter: 1…max, default `def`. */
export function limitParam(url: URL, def: number, max: number): number {
	const raw = url.searchParams.get('limit');
	if (raw === null) return def;
	const n = Number(raw);
	if (!Number.isInteger(n) || n < 1 || n > max)
		throw new ApiError({
			status: 400,
			detail: `limit must be a whole number from 1 to ${max}.`,
			errors: [{ pointer: '#/query/limit', detail: 'Out of range.' }]
		});
	return n;
}
