// Canonical record content (the content hash that recognises an unchanged row) and version diffs.
// Runnel's own rules: no external source applies.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { canonicalData, canonicalJson, changedFields, diffVersions } from '../../src/lib/domain/record-content';

describe('canonical record content', () => {
	it('ignores key order and empty values', () => {
		const a = { local_id: 'A-1', extent_acres: 12.5, notes: null, status: 'installed', huc12: '' };
		const b = { status: 'installed', huc12: undefined, extent_acres: 12.5, local_id: 'A-1' };
		expect(canonicalJson(a)).toBe(canonicalJson(b));
		expect(canonicalJson(a)).toBe('{"extent_acres":12.5,"local_id":"A-1","status":"installed"}');
	});

	it('tells different values apart (number vs. its text, one cent)', () => {
		expect(canonicalJson({ x: 12.5 })).not.toBe(canonicalJson({ x: '12.5' }));
		expect(canonicalJson({ x: 12.5 })).not.toBe(canonicalJson({ x: 12.51 }));
		expect(canonicalJson({ x: -0 })).toBe(canonicalJson({ x: 0 }));
	});

	it('refuses non-finite numbers', () => {
		expect(() => canonicalData({ x: Number.NaN })).toThrow(/finite/);
		expect(() => canonicalData({ x: Infinity })).toThrow(/finite/);
	});

	it('is the same for any permutation of the same members (property)', () => {
		fc.assert(
			fc.property(
				fc.dictionary(fc.string({ minLength: 1, maxLength: 8 }), fc.oneof(fc.string(), fc.integer(), fc.constant(null))),
				(obj) => {
					const reversed = Object.fromEntries(Object.entries(obj).reverse());
					expect(canonicalJson(reversed)).toBe(canonicalJson(obj));
				}
			)
		);
	});
});

describe('changed fields and diffs', () => {
	it('names added, removed and changed fields, sorted', () => {
		expect(changedFields({ a: 1, b: 2, c: 3 }, { a: 1, b: 5, d: 4 })).toEqual(['b', 'c', 'd']);
		expect(changedFields(null, { b: 1, a: 2 })).toEqual(['a', 'b']);
		expect(changedFields({ a: 1, n: null }, { a: 1 })).toEqual([]);
	});

	it('gives before and after per field', () => {
		expect(
			diffVersions({ status: 'installed', extent_acres: 10 }, { status: 'withdrawn', extent_acres: 10, withdrawn_on: '2025-01-02' })
		).toEqual([
			{ field: 'status', before: 'installed', after: 'withdrawn' },
			{ field: 'withdrawn_on', before: null, after: '2025-01-02' }
		]);
	});
});
