// The in-service rule is Runnel's own (product brief "In service"; issue 5 "In service"): a record counts
// in a FY when installed on or before its last day, its lifespan not run out before its first day, and not
// withdrawn before its first day; the `installed` basis counts only the FY of installed_on. FY boundaries
// follow 31 U.S.C. §1102 (federal) and NCSL "Fiscal Years", 2023 (state, July start by default).
// Lifespans used here (15 years for 605, 1 year for 340) are recalled from memory of the NRCS practice
// lifespan list; CPS 605 itself asks for an expected life of at least 10 years.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { addDays, fiscalYearRange, type FyBasis } from '../../src/lib/domain/fiscal-year';
import {
	countsInFiscalYear,
	fiscalYearsCounted,
	fiscalYearSpan,
	inServiceOn,
	lifespanLastDay,
	type ServiceRecord
} from '../../src/lib/domain/in-service';

const state = { fyBasis: 'state' as const, startMonth: 7 };
const federal = { fyBasis: 'federal' as const };

describe('lifespan', () => {
	it('runs from the install date to the day before the anniversary', () => {
		expect(lifespanLastDay('2016-07-01', 15)).toBe('2031-06-30');
		expect(lifespanLastDay('2020-10-15', 1)).toBe('2021-10-14');
		expect(lifespanLastDay('2020-02-29', 1)).toBe('2021-02-28'); // leap-day install: in service through Feb 28
		expect(lifespanLastDay('2020-02-29', 4)).toBe('2024-02-28');
		expect(() => lifespanLastDay('2020-01-01', 0)).toThrow(RangeError);
	});
	it('in service on its first and last day, not the day after', () => {
		const r = { installed_on: '2016-07-01' };
		expect(inServiceOn(r, 15, '2016-07-01')).toBe(true);
		expect(inServiceOn(r, 15, '2031-06-30')).toBe(true);
		expect(inServiceOn(r, 15, '2031-07-01')).toBe(false);
		expect(inServiceOn(r, 15, '2016-06-30')).toBe(false);
	});
});

describe('in_service basis', () => {
	it('a bioreactor installed on FY2017’s first day counts FY2017–FY2031 (state, July)', () => {
		expect(fiscalYearsCounted({ installed_on: '2016-07-01' }, 15, 'in_service', { from: 2010, to: 2040 }, state)).toEqual(
			Array.from({ length: 15 }, (_, i) => 2017 + i)
		);
	});

	it('installed on a FY’s last day counts in that FY', () => {
		expect(countsInFiscalYear({ installed_on: '2027-06-30' }, 2027, 15, 'in_service', state)).toBe(true);
		expect(countsInFiscalYear({ installed_on: '2027-07-01' }, 2027, 15, 'in_service', state)).toBe(false);
	});

	it('a one-year cover crop planted mid-year spans two fiscal years; planted on the first day, one', () => {
		expect(fiscalYearsCounted({ installed_on: '2020-10-15' }, 1, 'in_service', { from: 2019, to: 2024 }, state)).toEqual([2021, 2022]);
		expect(fiscalYearsCounted({ installed_on: '2020-07-01' }, 1, 'in_service', { from: 2019, to: 2024 }, state)).toEqual([2021]);
	});

	it('withdrawal: counts through the FY it happened in, not after; withdrawn on a FY’s first day still counts there', () => {
		const r: ServiceRecord = { installed_on: '2016-07-01', status: 'withdrawn', withdrawn_on: '2020-03-15' };
		expect(fiscalYearsCounted(r, 15, 'in_service', { from: 2015, to: 2030 }, state)).toEqual([2017, 2018, 2019, 2020]);
		const onFirst: ServiceRecord = { installed_on: '2016-07-01', status: 'withdrawn', withdrawn_on: '2020-07-01' };
		expect(countsInFiscalYear(onFirst, 2021, 15, 'in_service', state)).toBe(true);
		expect(countsInFiscalYear(onFirst, 2022, 15, 'in_service', state)).toBe(false);
	});

	it('withdrawn with no date counts nowhere on the in-service basis', () => {
		const r: ServiceRecord = { installed_on: '2016-07-01', status: 'withdrawn', withdrawn_on: null };
		expect(fiscalYearsCounted(r, 15, 'in_service', { from: 2015, to: 2030 }, state)).toEqual([]);
		expect(fiscalYearSpan(r, 15, 'in_service', state)).toBeNull();
	});

	it('federal basis moves the boundaries to October 1', () => {
		// installed 2016-07-01 is in federal FY2016; 15-year lifespan ends 2031-06-30, in federal FY2031
		expect(fiscalYearSpan({ installed_on: '2016-07-01' }, 15, 'in_service', federal)).toEqual({ from: 2016, to: 2031 });
		expect(countsInFiscalYear({ installed_on: '2016-09-30' }, 2016, 1, 'in_service', federal)).toBe(true);
		expect(countsInFiscalYear({ installed_on: '2016-10-01' }, 2016, 1, 'in_service', federal)).toBe(false);
	});
});

describe('installed basis', () => {
	it('counts only the FY of installed_on, whatever happens later', () => {
		const r: ServiceRecord = { installed_on: '2019-09-30', status: 'withdrawn', withdrawn_on: '2020-01-01' };
		expect(fiscalYearsCounted(r, 15, 'installed', { from: 2015, to: 2030 }, state)).toEqual([2020]);
		expect(fiscalYearsCounted(r, 15, 'installed', { from: 2015, to: 2030 }, federal)).toEqual([2019]);
		expect(fiscalYearSpan(r, 15, 'installed', federal)).toEqual({ from: 2019, to: 2019 });
	});
});

describe('in-service properties', () => {
	const day = fc.integer({ min: 0, max: 365 * 40 }).map((n) => addDays('1995-01-01', n));
	const recordArb = fc.record({
		installed_on: day,
		withdrawAfter: fc.option(fc.integer({ min: 0, max: 365 * 20 }), { nil: null }), // withdrawn on or after install (intake refuses the rest)
		statusOnly: fc.boolean()
	});
	const opts = fc.oneof(
		fc.integer({ min: 1, max: 12 }).map((m) => ({ fyBasis: 'state' as FyBasis, startMonth: m })),
		fc.constant({ fyBasis: 'federal' as FyBasis })
	);
	const toRecord = (x: { installed_on: string; withdrawAfter: number | null; statusOnly: boolean }): ServiceRecord =>
		x.withdrawAfter === null
			? x.statusOnly
				? { installed_on: x.installed_on, status: 'withdrawn', withdrawn_on: null }
				: { installed_on: x.installed_on, status: 'installed' }
			: { installed_on: x.installed_on, status: 'withdrawn', withdrawn_on: addDays(x.installed_on, x.withdrawAfter) };

	it('the years counted form one unbroken run equal to fiscalYearSpan', () => {
		fc.assert(
			fc.property(
				recordArb,
				fc.integer({ min: 1, max: 20 }),
				opts,
				fc.constantFrom('in_service' as const, 'installed' as const),
				(x, life, o, basis) => {
					const r = toRecord(x);
					const years = fiscalYearsCounted(r, life, basis, { from: 1990, to: 2060 }, o);
					const span = fiscalYearSpan(r, life, basis, o);
					if (span === null) return years.length === 0;
					const expected = Array.from({ length: span.to - span.from + 1 }, (_, i) => span.from + i);
					return JSON.stringify(years) === JSON.stringify(expected);
				}
			)
		);
	});

	it('counted in a FY ⇔ in service on some day of it (checked day by day)', () => {
		fc.assert(
			fc.property(recordArb, fc.integer({ min: 1, max: 3 }), fc.integer({ min: 1995, max: 2030 }), opts, (x, life, fy, o) => {
				const r = toRecord(x);
				const { first, last } = fiscalYearRange(fy, o.fyBasis, 'startMonth' in o ? o.startMonth : 7);
				let anyDay = false;
				for (let d = first; d <= last; d = addDays(d, 1)) {
					if (inServiceOn(r, life, d)) {
						anyDay = true;
						break;
					}
				}
				return countsInFiscalYear(r, fy, life, 'in_service', o) === anyDay;
			}),
			{ numRuns: 60 }
		);
	});
});
