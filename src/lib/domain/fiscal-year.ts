// Fiscal years. Pure; dates are calendar dates written 'YYYY-MM-DD' (no time zones involved).
//
// - Federal FY: "begins on October 1 of each year and ends on September 30 of the following year"
//   (31 U.S.C. §1102); it carries the number of the calendar year in which it ends.
// - State FY: most states begin July 1 (National Conference of State Legislatures, "Fiscal Years", 2023);
//   the start month is a setting (`state_fy_start_month`). Named, like the federal FY, for the calendar
//   year in which it ends, so a January start makes the FY the calendar year itself.

export type FyBasis = 'state' | 'federal';

/** The federal fiscal year starts in October (31 U.S.C. §1102). */
export const FEDERAL_FY_START_MONTH = 10;
/** Default state fiscal year start: July (46 states; NCSL "Fiscal Years", 2023). */
export const DEFAULT_STATE_FY_START_MONTH = 7;

/** Oldest and newest fiscal year the hub accepts in a range (a guard against typos such as 20277). */
export const MIN_FY = 1900;
export const MAX_FY = 2200;

export interface CalendarDate {
	year: number;
	month: number;
	day: number;
}

const DATE_RE = /^(\d{4})-(\d{2})-(\d{2})$/;

export function isLeapYear(year: number): boolean {
	return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;
}

export function daysInMonth(year: number, month: number): number {
	return [31, isLeapYear(year) ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][month - 1];
}

/** Parses a real calendar date 'YYYY-MM-DD'; throws RangeError for anything else (e.g. 2026-02-30). */
export function parseDate(date: string): CalendarDate {
	const m = DATE_RE.exec(date);
	if (!m) throw new RangeError(`Not a date in YYYY-MM-DD form: ${JSON.stringify(date)}`);
	const year = Number(m[1]);
	const month = Number(m[2]);
	const day = Number(m[3]);
	if (month < 1 || month > 12 || day < 1 || day > daysInMonth(year, month)) throw new RangeError(`No such calendar date: ${date}`);
	return { year, month, day };
}

const pad2 = (n: number) => String(n).padStart(2, '0');

export function formatDate(d: CalendarDate): string {
	return `${String(d.year).padStart(4, '0')}-${pad2(d.month)}-${pad2(d.day)}`;
}

function checkStartMonth(startMonth: number): void {
	if (!Number.isInteger(startMonth) || startMonth < 1 || startMonth > 12) {
		throw new RangeError(`A fiscal year start month is 1–12, not ${startMonth}`);
	}
}

/** The fiscal year (named for the calendar year in which it ends) that a date falls in. */
export function fiscalYearForStartMonth(date: string, startMonth: number): number {
	checkStartMonth(startMonth);
	const { year, month } = parseDate(date);
	if (startMonth === 1) return year;
	return month >= startMonth ? year + 1 : year;
}

/** State fiscal year of a date; `startMonth` 7 (July–June) by default. */
export function stateFiscalYear(date: string, startMonth: number = DEFAULT_STATE_FY_START_MONTH): number {
	return fiscalYearForStartMonth(date, startMonth);
}

/** Federal fiscal year of a date: October 1 – September 30 (31 U.S.C. §1102). */
export function federalFiscalYear(date: string): number {
	return fiscalYearForStartMonth(date, FEDERAL_FY_START_MONTH);
}

/** Fiscal year of a date on either basis. */
export function fiscalYear(date: string, basis: FyBasis, startMonth: number = DEFAULT_STATE_FY_START_MONTH): number {
	return basis === 'federal' ? federalFiscalYear(date) : stateFiscalYear(date, startMonth);
}

/** First and last calendar day (inclusive) of a fiscal year. */
export function fiscalYearRange(
	fy: number,
	basis: FyBasis,
	startMonth: number = DEFAULT_STATE_FY_START_MONTH
): { first: string; last: string } {
	if (!Number.isInteger(fy) || fy < MIN_FY || fy > MAX_FY)
		throw new RangeError(`A fiscal year is a whole year ${MIN_FY}–${MAX_FY}, not ${fy}`);
	const s = basis === 'federal' ? FEDERAL_FY_START_MONTH : startMonth;
	checkStartMonth(s);
	if (s === 1) return { first: `${fy}-01-01`, last: `${fy}-12-31` };
	const lastMonth = s - 1;
	return {
		first: formatDate({ year: fy - 1, month: s, day: 1 }),
		last: formatDate({ year: fy, month: lastMonth, day: daysInMonth(fy, lastMonth) })
	};
}

export interface FyRange {
	from: number;
	to: number;
}

/** Thrown by parseFyRange with a message a person can act on. */
export class FyRangeError extends Error {}

/**
 * Parses a fiscal-year filter: `2027` (one year) or `2020..2027` (inclusive). Years are four digits
 * within MIN_FY–MAX_FY and `from` ≤ `to`.
 */
export function parseFyRange(text: string): FyRange {
	const s = text.trim();
	const m = /^(\d{4})(?:\.\.(\d{4}))?$/.exec(s);
	if (!m) throw new FyRangeError(`Write a fiscal year as 2027 or a range as 2020..2027, not ${JSON.stringify(text)}.`);
	const from = Number(m[1]);
	const to = m[2] === undefined ? from : Number(m[2]);
	for (const y of [from, to]) {
		if (y < MIN_FY || y > MAX_FY) throw new FyRangeError(`Fiscal year ${y} is outside ${MIN_FY}–${MAX_FY}.`);
	}
	if (from > to) throw new FyRangeError(`The range ${s} runs backwards; write the earlier year first (${to}..${from}).`);
	return { from, to };
}

export function formatFyRange(r: FyRange): string {
	return r.from === r.to ? String(r.from) : `${r.from}..${r.to}`;
}

/** Every fiscal year of an inclusive range, in order. */
export function fiscalYearsOf(r: FyRange): number[] {
	const out: number[] = [];
	for (let y = r.from; y <= r.to; y++) out.push(y);
	return out;
}

/** Adds whole years to a date; Feb 29 moves to Mar 1 in a common year (a full N years have passed). */
export function addYears(date: string, years: number): string {
	const d = parseDate(date);
	const year = d.year + years;
	if (d.month === 2 && d.day === 29 && !isLeapYear(year)) return formatDate({ year, month: 3, day: 1 });
	return formatDate({ year, month: d.month, day: d.day });
}

/** Adds (or with a negative n, subtracts) days to a date. */
export function addDays(date: string, n: number): string {
	const d = parseDate(date);
	const t = Date.UTC(d.year, d.month - 1, d.day) + n * 86_400_000;
	const u = new Date(t);
	return formatDate({ year: u.getUTCFullYear(), month: u.getUTCMonth() + 1, day: u.getUTCDate() });
}
