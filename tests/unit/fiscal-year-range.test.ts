import { describe, expect, it } from 'vitest';
import { fiscalYearOf, fiscalYearRange } from '../../src/lib/domain/fiscal-year-range';

describe('state fiscal years (product brief: default July–June; named for the year in which it ends)', () => {
	// Iowa's state fiscal year runs July 1 – June 30 (recalled from memory: Iowa Code §8.2; the brief sets
	// July as the default start month).
	it('FY2025 with a July start is 2024-07-01 … 2025-06-30', () => {
		expect(fiscalYearRange(2025)).toEqual({ start: '2024-07-01', endExclusive: '2025-07-01' });
		expect(fiscalYearOf('2024-06-30')).toBe(2024);
		expect(fiscalYearOf('2024-07-01')).toBe(2025);
		expect(fiscalYearOf('2025-06-30')).toBe(2025);
	});

	// Source: 31 U.S.C. §1102 — "The fiscal year of the Treasury begins on October 1 of each year and ends on
	// September 30 of the following year." (the federal fiscal year, named for the year it ends).
	it('an October start gives the federal fiscal year', () => {
		expect(fiscalYearRange(2025, 10)).toEqual({ start: '2024-10-01', endExclusive: '2025-10-01' });
		expect(fiscalYearOf('2024-09-30', 10)).toBe(2024);
		expect(fiscalYearOf('2024-10-01', 10)).toBe(2025);
	});

	it('a January start is the calendar year', () => {
		expect(fiscalYearRange(2025, 1)).toEqual({ start: '2025-01-01', endExclusive: '2026-01-01' });
		expect(fiscalYearOf('2025-12-31', 1)).toBe(2025);
	});

	it('every date falls inside the range of its own fiscal year (all start months)', () => {
		for (let m = 1; m <= 12; m++) {
			for (const d of ['2019-01-01', '2020-02-29', '2021-06-30', '2022-07-01', '2023-12-31']) {
				const { start, endExclusive } = fiscalYearRange(fiscalYearOf(d, m), m);
				expect(d >= start && d < endExclusive, `${d} start month ${m}`).toBe(true);
			}
		}
	});

	it('refuses a month outside 1–12 and a malformed date', () => {
		expect(() => fiscalYearRange(2025, 13)).toThrow(RangeError);
		expect(() => fiscalYearOf('2025/01/01')).toThrow(RangeError);
	});
});
