import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
	addDays,
	addYears,
	federalFiscalYear,
	fiscalYear,
	fiscalYearRange,
	fiscalYearsOf,
	formatFyRange,
	FyRangeError,
	parseDate,
	parseFyRange,
	stateFiscalYear
} from '../../src/lib/domain/fiscal-year';

// Federal FY: "begins on October 1 of each year and ends on September 30 of the following year"
// — 31 U.S.C. §1102 (United States Code, Title 31). The FY carries the number of the calendar year in
// which it ends (FY2027 = Oct 1, 2026 – Sep 30, 2027).
describe('federal fiscal year (31 U.S.C. §1102)', () => {
	it.each([
		['2026-10-01', 2027], // first day of FY2027
		['2027-09-30', 2027], // last day of FY2027
		['2026-09-30', 2026], // the day before: last day of FY2026
		['2027-10-01', 2028],
		['2024-02-29', 2024], // leap day falls in FY2024 (Oct 2023 – Sep 2024)
		['2000-01-01', 2000]
	])('%s is in federal FY%i', (date, fy) => expect(federalFiscalYear(date)).toBe(fy));

	it('FY2027 runs from 2026-10-01 to 2027-09-30', () => {
		expect(fiscalYearRange(2027, 'federal')).toEqual({ first: '2026-10-01', last: '2027-09-30' });
	});

	it('the federal basis ignores the state start month', () => {
		expect(fiscalYearRange(2027, 'federal', 1)).toEqual({ first: '2026-10-01', last: '2027-09-30' });
		expect(fiscalYear('2026-10-01', 'federal', 7)).toBe(2027);
	});
});

// State FYs: 46 states begin July 1; New York April 1; Texas September 1; Alabama and Michigan October 1
// — National Conference of State Legislatures, "Fiscal Years", 2023. Named for the year in which it ends
// (issue 5: FY2027 = Jul 2026 – Jun 2027 on the state basis).
describe('state fiscal year (NCSL "Fiscal Years", 2023)', () => {
	it.each([
		['2026-07-01', 2027], // first day of FY2027 (July start, the default)
		['2027-06-30', 2027], // last day of FY2027
		['2026-06-30', 2026],
		['2027-07-01', 2028],
		['2024-02-29', 2024], // leap day, FY2024 = Jul 2023 – Jun 2024
		['2026-12-31', 2027],
		['2027-01-01', 2027]
	])('%s is in state FY%i (July start)', (date, fy) => expect(stateFiscalYear(date)).toBe(fy));

	it('FY2027 on the default July basis is 2026-07-01 – 2027-06-30', () => {
		expect(fiscalYearRange(2027, 'state')).toEqual({ first: '2026-07-01', last: '2027-06-30' });
	});

	it('New York (April 1): FY2027 = 2026-04-01 – 2027-03-31', () => {
		expect(fiscalYearRange(2027, 'state', 4)).toEqual({ first: '2026-04-01', last: '2027-03-31' });
		expect(stateFiscalYear('2026-04-01', 4)).toBe(2027);
		expect(stateFiscalYear('2026-03-31', 4)).toBe(2026);
	});

	it('Texas (September 1): FY2027 = 2026-09-01 – 2027-08-31', () => {
		expect(fiscalYearRange(2027, 'state', 9)).toEqual({ first: '2026-09-01', last: '2027-08-31' });
	});

	it('a March start ends on the last day of February, 29 in a leap year', () => {
		expect(fiscalYearRange(2024, 'state', 3)).toEqual({ first: '2023-03-01', last: '2024-02-29' });
		expect(fiscalYearRange(2025, 'state', 3)).toEqual({ first: '2024-03-01', last: '2025-02-28' });
		expect(fiscalYearRange(2100, 'state', 3).last).toBe('2100-02-28'); // 2100 is not a leap year (Gregorian rule)
		expect(fiscalYearRange(2000, 'state', 3).last).toBe('2000-02-29'); // 2000 is
	});

	it('a January start is the calendar year, named for that same year', () => {
		expect(stateFiscalYear('2026-01-01', 1)).toBe(2026);
		expect(stateFiscalYear('2026-12-31', 1)).toBe(2026);
		expect(fiscalYearRange(2026, 'state', 1)).toEqual({ first: '2026-01-01', last: '2026-12-31' });
	});

	it('refuses impossible dates and start months', () => {
		expect(() => stateFiscalYear('2026-02-29')).toThrow(RangeError);
		expect(() => stateFiscalYear('2026-13-01')).toThrow(RangeError);
		expect(() => stateFiscalYear('02/03/2026')).toThrow(RangeError);
		expect(() => stateFiscalYear('2026-07-01', 0)).toThrow(RangeError);
		expect(() => stateFiscalYear('2026-07-01', 13)).toThrow(RangeError);
		expect(() => fiscalYearRange(2027.5, 'state')).toThrow(RangeError);
		expect(parseDate('2024-02-29')).toEqual({ year: 2024, month: 2, day: 29 });
	});
});

describe('fiscal-year range filter (fy=2020..2027)', () => {
	it('parses one year and inclusive ranges', () => {
		expect(parseFyRange('2020..2027')).toEqual({ from: 2020, to: 2027 });
		expect(parseFyRange('2027')).toEqual({ from: 2027, to: 2027 });
		expect(parseFyRange(' 2020..2020 ')).toEqual({ from: 2020, to: 2020 });
		expect(fiscalYearsOf(parseFyRange('2020..2023'))).toEqual([2020, 2021, 2022, 2023]);
		expect(formatFyRange({ from: 2020, to: 2027 })).toBe('2020..2027');
		expect(formatFyRange({ from: 2027, to: 2027 })).toBe('2027');
	});

	it.each(['', '2020-2027', '2020..', '..2027', '20..27', '2027..2020', 'fy2027', '2020...2027', '0999..2000', '2020..9999'])(
		'refuses %j with a plain message',
		(s) => {
			expect(() => parseFyRange(s)).toThrow(FyRangeError);
		}
	);
});

describe('date arithmetic for lifespans', () => {
	it('adds whole years; Feb 29 moves to Mar 1 in a common year', () => {
		expect(addYears('2020-02-29', 1)).toBe('2021-03-01');
		expect(addYears('2020-02-29', 4)).toBe('2024-02-29');
		expect(addYears('2019-07-15', 10)).toBe('2029-07-15');
	});
	it('adds and subtracts days across month, year and leap-day boundaries', () => {
		expect(addDays('2024-03-01', -1)).toBe('2024-02-29');
		expect(addDays('2023-03-01', -1)).toBe('2023-02-28');
		expect(addDays('2026-12-31', 1)).toBe('2027-01-01');
	});
});

// Properties of any FY definition "named for the calendar year in which it ends" (the same sources).
describe('fiscal-year properties', () => {
	const dateArb = fc
		.date({ min: new Date('1950-01-01T00:00:00Z'), max: new Date('2150-12-31T00:00:00Z'), noInvalidDate: true })
		.map((d) => d.toISOString().slice(0, 10));
	const monthArb = fc.integer({ min: 1, max: 12 });

	it('every date lies inside the range of its own fiscal year', () => {
		fc.assert(
			fc.property(dateArb, monthArb, fc.constantFrom('state' as const, 'federal' as const), (date, m, basis) => {
				const fy = fiscalYear(date, basis, m);
				const { first, last } = fiscalYearRange(fy, basis, m);
				return first <= date && date <= last;
			})
		);
	});

	it('consecutive fiscal years tile the calendar: FY n+1 starts the day after FY n ends, 365 or 366 days each', () => {
		fc.assert(
			fc.property(fc.integer({ min: 1951, max: 2149 }), monthArb, (fy, m) => {
				const a = fiscalYearRange(fy, 'state', m);
				const b = fiscalYearRange(fy + 1, 'state', m);
				const days = (Date.parse(a.last) - Date.parse(a.first)) / 86_400_000 + 1;
				return addDays(a.last, 1) === b.first && (days === 365 || days === 366);
			})
		);
	});

	it('a fiscal year ends in the calendar year it is named for', () => {
		fc.assert(
			fc.property(fc.integer({ min: 1951, max: 2149 }), monthArb, (fy, m) => fiscalYearRange(fy, 'state', m).last.startsWith(`${fy}-`))
		);
	});

	it('fiscal years never decrease as dates advance', () => {
		fc.assert(
			fc.property(
				dateArb,
				fc.integer({ min: 0, max: 800 }),
				monthArb,
				(date, n, m) => stateFiscalYear(date, m) <= stateFiscalYear(addDays(date, n), m)
			)
		);
	});
});
