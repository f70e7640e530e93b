// The small pure pieces the checker and readers stand on.
import { describe, expect, it } from 'vitest';
import { acreageBounds } from '../../src/lib/domain/acreage-plausibility';
import { daysInMonth, isLeapYear, isoDateOfUtc, parseDateText, todayIn } from '../../src/lib/domain/calendar-date';
import { cellRef, columnLetters } from '../../src/lib/domain/cell-ref';
import { countyShapesFromTopology, pointInCounty } from '../../src/lib/domain/county-shapes';
import { parseNumberText } from '../../src/lib/domain/number-text';
import { PRACTICE_CATALOG } from '../../src/lib/domain/practice-catalog';
import { declaredCharset, detectFormat } from '../../src/lib/server/ingest/read-rows';
import { countyTopology } from '../../src/lib/server/ingest/reference';

describe('cell references (ECMA-376 Part 1, §18.17.2.3, A1 style)', () => {
	it.each([
		[1, 'A'],
		[2, 'B'],
		[26, 'Z'],
		[27, 'AA'],
		[52, 'AZ'],
		[53, 'BA'],
		[702, 'ZZ'],
		[703, 'AAA'],
		[16384, 'XFD'] // the last column of an Excel 2007+ sheet
	])('column %i is %s', (n, letters) => expect(columnLetters(n)).toBe(letters));
	it('builds B17 and refuses column 0', () => {
		expect(cellRef(2, 17)).toBe('B17');
		expect(() => columnLetters(0)).toThrow(RangeError);
	});
});

describe('numbers written as text', () => {
	it.each([
		['80', 80],
		[' 80.25 ', 80.25],
		['+3', 3],
		['-0', 0],
		['.5', 0.5],
		['5.', 5],
		['007', 7]
	])('%j reads as %d', (t, v) => expect(parseNumberText(t)).toEqual({ ok: true, value: v }));
	it.each([
		['1,5', 'comma'],
		['1,500', 'comma'],
		['1,500.25', 'comma'],
		['1e400', 'exponent'],
		['1E-05', 'exponent'],
		['$80', 'symbols'],
		['80 ac', 'symbols'],
		['12%', 'symbols'],
		['1 000', 'symbols'],
		['NaN', 'not-a-number'],
		['-Infinity', 'not-a-number'],
		['N/A', 'not-a-number'],
		['#N/A', 'not-a-number'],
		['lots', 'not-a-number'],
		['9'.repeat(400), 'too-large']
	])('%j is refused (%s)', (t, problem) => expect(parseNumberText(t)).toEqual({ ok: false, problem }));
});

describe('calendar dates (ISO 8601 YYYY-MM-DD, Gregorian leap years)', () => {
	it('leap years: divisible by 4, except centuries not divisible by 400', () => {
		expect([1900, 2000, 2023, 2024, 2100].map(isLeapYear)).toEqual([false, true, false, true, false]);
		expect(daysInMonth(2024, 2)).toBe(29);
		expect(daysInMonth(2025, 2)).toBe(28);
		expect(daysInMonth(2025, 4)).toBe(30);
		expect(daysInMonth(2025, 12)).toBe(31);
	});
	it.each([
		['2024-02-29', { ok: true, value: '2024-02-29' }],
		['2000-02-29', { ok: true, value: '2000-02-29' }],
		['1900-02-29', { ok: false, problem: 'not-a-day', daysInMonth: 28 }],
		['2026-02-30', { ok: false, problem: 'not-a-day', daysInMonth: 28 }],
		['2026-04-31', { ok: false, problem: 'not-a-day', daysInMonth: 30 }],
		['2026-00-10', { ok: false, problem: 'not-a-day' }],
		['02/03/2026', { ok: false, problem: 'slashes' }],
		['2026.02.03', { ok: false, problem: 'slashes' }],
		['2026-02-03T10:00:00Z', { ok: false, problem: 'with-time' }],
		['2026-2-3', { ok: false, problem: 'shape' }],
		['yesterday', { ok: false, problem: 'shape' }]
	])('%j', (t, r) => expect(parseDateText(t)).toEqual(r));
	it('reads spreadsheet dates as their UTC calendar date', () => {
		expect(isoDateOfUtc(new Date(Date.UTC(2024, 1, 29, 23, 59)))).toBe('2024-02-29');
		expect(isoDateOfUtc(new Date(NaN))).toBeNull();
	});
	it("takes today in the hub's time zone (IANA tz database)", () => {
		const instant = new Date('2026-01-01T03:00:00Z'); // 9 p.m. on 31 December in Iowa (UTC−6 in winter)
		expect(todayIn('America/Chicago', instant)).toBe('2025-12-31');
		expect(todayIn('UTC', instant)).toBe('2026-01-01');
	});
});

describe('acreage plausibility bounds (our own rule of thumb)', () => {
	it('has bounds for every catalog practice, marked as our own rule of thumb', () => {
		for (const p of PRACTICE_CATALOG) {
			const b = acreageBounds(p.code)!;
			expect(b.low).toBeLessThan(b.high);
			expect(b.basis).toMatch(/own rule of thumb/);
		}
		expect(acreageBounds('999')).toBeNull();
	});
	it('keeps the bioreactor bounds around published system sizes (30–100 ac, ADMC)', () => {
		const b = acreageBounds('605')!;
		expect(b.low).toBeLessThanOrEqual(30);
		expect(b.high).toBeGreaterThanOrEqual(100);
	});
});

describe('county shapes (us-atlas, Census cartographic boundary files 2017)', () => {
	const iowa = countyShapesFromTopology(countyTopology(), '19');
	it('cuts the 99 Iowa counties with 5-digit ids', () => {
		expect(iowa.features).toHaveLength(99);
		expect(iowa.features.every((f) => /^19\d{3}$/.test(String(f.id)))).toBe(true);
	});
	// City-centre coordinates, approximate, from general reference (recalled): Des Moines 41.59 N 93.62 W
	// (Polk, 19153); Ames 42.03 N 93.62 W (Story, 19169); Algona 43.07 N 94.23 W (Kossuth, 19109).
	it.each([
		['19153', 41.59, -93.62, true],
		['19169', 42.03, -93.62, true],
		['19109', 43.07, -94.23, true],
		['19169', 41.59, -93.62, false],
		['19153', 42.03, -93.62, false],
		['19109', 41.59, -93.62, false]
	])('county %s contains (%d, %d): %s', (fips, lat, lon, inside) => {
		expect(pointInCounty(iowa, fips, lon, lat)).toBe(inside);
	});
	it('says null for a county it has no shape for', () => expect(pointInCounty(iowa, '17031', -87.6, 41.9)).toBeNull());
});

describe('upload formats', () => {
	it.each([
		['text/csv', undefined, 'csv'],
		['text/csv; charset=utf-8', undefined, 'csv'],
		['application/vnd.openxmlformats-officedocument.spreadsheetml.sheet', undefined, 'xlsx'],
		['application/x-ndjson', undefined, 'ndjson'],
		['application/json', undefined, 'json'],
		['application/octet-stream', 'records.XLSX', 'xlsx'],
		['', 'export.jsonl', 'ndjson'],
		[null, 'export.csv', 'csv'],
		['text/plain', 'notes.txt', null],
		['application/pdf', 'x.csv', null]
	] as const)('%j + %j → %s', (type, name, format) => expect(detectFormat(type, name)).toBe(format));
	it('reads a declared charset', () => {
		expect(declaredCharset('text/csv; charset=windows-1252')).toBe('windows-1252');
		expect(declaredCharset('text/csv; charset="UTF-8"')).toBe('utf-8');
		expect(declaredCharset('text/csv; charset=ebcdic')).toBeUndefined();
		expect(declaredCharset('text/csv')).toBeUndefined();
	});
});
