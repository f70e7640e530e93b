// Opaque cursors for keyset pagination: the position after the last item of a page, as base64url JSON.
// A cursor only says where to continue; every page is still filtered by the caller's access rules, so a
// forged cursor reveals nothing. Lists answer `{ data, next }` and a `Link: <…>; rel="next"` header.
import { z } from 'zod';
import { ApiError } from './problem';

export function encodeCursor(position: Record<string, unknown>): string {
	return Buffer.from(JSON.stringify(position), 'utf8').toString('base64url');
}

/** Decodes `?cursor=` against the shape the list expects; a malformed cursor is a 400 problem. */
export function decodeCursor<T extends z.ZodType>(raw: string | null, shape: T): z.infer<T> | null {
	if (raw === null || raw === '') return null;
	try {
		if (raw.length > 2000) throw new Error('too long');
		return shape.parse(JSON.parse(Buffer.from(raw, 'base64url').toString('utf8')));
	} catch {
		throw new ApiError({
			status: 400,
			type: 'invalid-cursor',
			detail: 'The cursor is not one this list gave out; start again without it.',
			errors: [{ pointer: '#/query/cursor', detail: 'not a valid cursor' }]
		});
	}
}

/** `?limit=` between 1 and max (default `fallback`); anything else is a 400 problem. */
export function pageLimit(url: URL, fallback = 50, max = 500): number {
	const raw = url.searchParams.get('limit');
	if (raw === null || raw === '') return fallback;
	const n = Number(raw);
	if (!Number.isInteger(n) || n < 1 || n > max)
		throw new ApiError({
			status: 400,
			type: 'invalid-parameter',
			detail: `limit must be a whole number from 1 to ${max}.`,
			errors: [{ pointer: '#/query/limit', detail: `expected 1–${max}` }]
		});
	return n;
}

/** The URL of the next page: the same query with `cursor` replaced. */
export function nextLink(url: URL, cursor: string | null): string | null {
	if (!cursor) return null;
	const next = new URL(url.pathname + url.search, 'http://x');
	next.searchParams.set('cursor', cursor);
	return next.pathname + next.search;
}

export interface Page<T> {
	data: T[];
	next: string | null;
}

/**
 * Turns `limit + 1` fetched rows into a page: the extra row only proves a next page exists.
 * `position` gives the cursor of the last row kept.
 */
export function toPage<Row, Out>(
	url: URL,
	rows: Row[],
	limit: number,
	position: (row: Row) => Record<string, unknown>,
	shape: (row: Row) => Out
): Page<Out> {
	const more = rows.length > limit;
	const kept = more ? rows.slice(0, limit) : rows;
	const cursor = more && kept.length > 0 ? encodeCursor(position(kept[kept.length - 1])) : null;
	return { data: kept.map(shape), next: nextLink(url, cursor) };
}

/** A JSON response for a page, with the RFC 8288 `Link` header when there is a next page. */
export function pageResponse<T>(page: Page<T>): Response {
	const headers: Record<string, string> = { 'content-type': 'application/json' };
	if (page.next) headers.link = `<${page.next}>; rel="next"`;
	return new Response(JSON.stringify(page), { status: 200, headers });
}
