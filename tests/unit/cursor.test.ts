// Opaque cursors (src/lib/server/http/cursor.ts): round trip, tampering → 400 problem, next links.
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { decodeCursor, encodeCursor, nextLink, pageLimit, toPage } from '../../src/lib/server/http/cursor';
import { ApiError } from '../../src/lib/server/http/problem';

const Shape = z.object({ id: z.string().regex(/^\d+$/) });

describe('cursors', () => {
	it('round-trip a position', () => {
		expect(decodeCursor(encodeCursor({ id: '42' }), Shape)).toEqual({ id: '42' });
		expect(decodeCursor(null, Shape)).toBeNull();
	});

	it('refuse anything they did not give out', () => {
		for (const bad of ['nonsense', encodeCursor({ id: 'DROP TABLE' }), encodeCursor({ other: 1 }), 'x'.repeat(3000)]) {
			let err: unknown;
			try {
				decodeCursor(bad, Shape);
			} catch (e) {
				err = e;
			}
			expect(err).toBeInstanceOf(ApiError);
			expect((err as ApiError).init.status).toBe(400);
		}
	});

	it('keep the other query parameters in the next link', () => {
		const url = new URL('http://h/api/v1/records?county=19109&cursor=old&limit=2');
		const link = nextLink(url, 'NEW')!;
		expect(link.startsWith('/api/v1/records?')).toBe(true);
		const q = new URL(link, 'http://h').searchParams;
		expect(q.get('county')).toBe('19109');
		expect(q.get('limit')).toBe('2');
		expect(q.get('cursor')).toBe('NEW');
	});

	it('turn limit+1 rows into a page with a next link only when there is more', () => {
		const url = new URL('http://h/x');
		const rows = [{ id: '5' }, { id: '4' }, { id: '3' }];
		const more = toPage(
			url,
			rows,
			2,
			(r) => ({ id: r.id }),
			(r) => r.id
		);
		expect(more.data).toEqual(['5', '4']);
		expect(decodeCursor(new URL(more.next!, 'http://h').searchParams.get('cursor'), Shape)).toEqual({ id: '4' });
		expect(
			toPage(
				url,
				rows.slice(0, 2),
				2,
				(r) => ({ id: r.id }),
				(r) => r.id
			).next
		).toBeNull();
	});

	it('limit must be a whole number in range', () => {
		expect(pageLimit(new URL('http://h/x'))).toBe(50);
		expect(pageLimit(new URL('http://h/x?limit=7'))).toBe(7);
		for (const l of ['0', '-1', '2.5', 'abc', '100000']) expect(() => pageLimit(new URL(`http://h/x?limit=${l}`))).toThrow(ApiError);
	});
});
