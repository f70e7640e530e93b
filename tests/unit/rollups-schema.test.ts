// Reading the rollups query: groupings, FY ranges and the problems a caller gets back.
import { describe, expect, it } from 'vitest';
import { parseGrouping, parseGroupings, parseRollupQuery } from '$lib/schema/rollups';
import { neutraliseCell } from '$lib/server/rollups/export';

const q = (s: string) => parseRollupQuery(new URLSearchParams(s));

describe('groupings', () => {
	it('adds fy to every grouping and orders dimensions canonically', () => {
		expect(parseGrouping('practice,county').dims).toEqual(['fy', 'county', 'practice']);
		expect(parseGrouping('huc8').dims).toEqual(['fy', 'huc8']);
		expect(parseGrouping(' District , FY ').dims).toEqual(['fy', 'district']);
	});

	it('reads alternatives separated by | and repeated parameters, without duplicates', () => {
		expect(parseGroupings(['county,fy,practice|huc8|district']).map((g) => g.dims.join())).toEqual([
			'fy,county,practice',
			'fy,huc8',
			'fy,district'
		]);
		expect(parseGroupings(['county', 'fy,county']).length).toBe(1);
		expect(parseGroupings([]).map((g) => g.dims.join())).toEqual(['fy,county,practice']);
	});

	it('refuses unknown, repeated and incompatible dimensions', () => {
		expect(() => parseGrouping('county,farm')).toThrow(/Unknown dimension "farm"/);
		expect(() => parseGrouping('county,county')).toThrow(/twice/);
		expect(() => parseGrouping('county,huc8')).toThrow(/not both/);
	});
});

describe('query', () => {
	it('defaults: in-service basis, state FYs, JSON, the active method', () => {
		const r = q('');
		expect(r.ok && r.query).toMatchObject({ basis: 'in_service', fy_basis: 'state', format: 'json', method: null, fy: null });
	});

	it('reads a FY range and filters', () => {
		const r = q('fy=2020..2027&district=BLH&county=19169&practice=605&basis=installed&fy_basis=federal&format=xlsx');
		expect(r.ok && r.query).toMatchObject({
			fy: { from: 2020, to: 2027 },
			district: 'BLH',
			county: '19169',
			practice: '605',
			basis: 'installed',
			fy_basis: 'federal',
			format: 'xlsx'
		});
	});

	it('lists every problem with a pointer to the parameter', () => {
		const r = q('fy=2027..2020&basis=x&colour=blue&group=nope');
		expect(r.ok).toBe(false);
		const pointers = !r.ok ? r.errors.map((e) => e.pointer) : [];
		expect(pointers).toEqual(expect.arrayContaining(['#/query/fy', '#/query/basis', '#/query', '#/query/group']));
	});
});

describe('CSV formula neutralisation (OWASP "CSV Injection")', () => {
	it('prefixes text starting with = + - @ tab or CR with a quote; leaves numbers and other text alone', () => {
		expect(neutraliseCell('=1+1')).toBe("'=1+1");
		expect(neutraliseCell('+1')).toBe("'+1");
		expect(neutraliseCell('-1')).toBe("'-1");
		expect(neutraliseCell('@SUM(A1)')).toBe("'@SUM(A1)");
		expect(neutraliseCell('\t=1')).toBe("'\t=1");
		expect(neutraliseCell('Story')).toBe('Story');
		expect(neutraliseCell(-5)).toBe(-5);
		expect(neutraliseCell(null)).toBeNull();
	});
});
