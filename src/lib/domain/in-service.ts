// Which fiscal years a practice record counts in (product brief, "In service"; rollups issue).
//
// - `in_service` basis: a record is in service from its install date until install date + lifespan years
//   (the anniversary itself is the first day out of service), or until it is withdrawn. It counts in a FY
//   when it was installed on or before the FY's last day, its lifespan had not run out before the FY's
//   first day, and it was not withdrawn before the FY's first day.
// - `installed` basis: a record counts only in the FY of `installed_on` (what was put in that year; a
//   later withdrawal does not rewrite that history).
// A record whose status is `withdrawn` but which carries no withdrawal date counts nowhere on the
// in-service basis (we cannot tell when it left service, so we do not credit it).
import { addDays, addYears, fiscalYear, fiscalYearRange, type FyBasis, type FyRange } from './fiscal-year';

export type CountBasis = 'in_service' | 'installed';

export interface ServiceRecord {
	installed_on: string;
	status?: 'installed' | 'withdrawn' | string | null;
	withdrawn_on?: string | null;
}

export interface FyOptions {
	fyBasis: FyBasis;
	/** State FY start month (1–12); ignored on the federal basis. */
	startMonth?: number;
}

/** Last day the record is inside its lifespan: install date + lifespan years − 1 day. */
export function lifespanLastDay(installedOn: string, lifespanYears: number): string {
	if (!(Number.isInteger(lifespanYears) && lifespanYears >= 1))
		throw new RangeError(`A lifespan is a whole number of years ≥ 1, not ${lifespanYears}`);
	return addDays(addYears(installedOn, lifespanYears), -1);
}

/** Whether the record is withdrawn, and from when (null date = withdrawn at an unknown date). */
export function withdrawal(
	record: Pick<ServiceRecord, 'status' | 'withdrawn_on'>
): { withdrawn: false } | { withdrawn: true; on: string | null } {
	if (record.withdrawn_on) return { withdrawn: true, on: record.withdrawn_on };
	if (record.status === 'withdrawn') return { withdrawn: true, on: null };
	return { withdrawn: false };
}

/**
 * Whether a record is in service at some time within the inclusive period [first, last]: installed on or
 * before `last`, lifespan not run out before `first`, not withdrawn before `first`.
 */
export function inServiceDuring(record: ServiceRecord, lifespanYears: number, first: string, last: string): boolean {
	if (record.installed_on > last) return false;
	if (lifespanLastDay(record.installed_on, lifespanYears) < first) return false;
	const w = withdrawal(record);
	if (w.withdrawn && (w.on === null || w.on < first)) return false;
	return true;
}

/** Whether a record is in service on one day. */
export function inServiceOn(record: ServiceRecord, lifespanYears: number, date: string): boolean {
	return inServiceDuring(record, lifespanYears, date, date);
}

export function countsInFiscalYear(record: ServiceRecord, fy: number, lifespanYears: number, basis: CountBasis, opts: FyOptions): boolean {
	if (basis === 'installed') return fiscalYear(record.installed_on, opts.fyBasis, opts.startMonth) === fy;
	const { first, last } = fiscalYearRange(fy, opts.fyBasis, opts.startMonth);
	return inServiceDuring(record, lifespanYears, first, last);
}

/** The fiscal years of `range` (inclusive) a record counts in, ascending. */
export function fiscalYearsCounted(
	record: ServiceRecord,
	lifespanYears: number,
	basis: CountBasis,
	range: FyRange,
	opts: FyOptions
): number[] {
	const out: number[] = [];
	for (let fy = range.from; fy <= range.to; fy++) if (countsInFiscalYear(record, fy, lifespanYears, basis, opts)) out.push(fy);
	return out;
}

/**
 * The whole run of fiscal years a record counts in, without a range: on the installed basis the one FY
 * of installation; on the in-service basis from the install FY to the FY holding the last in-service day
 * (the lifespan's last day, or the withdrawal date when earlier). Empty when it never counts.
 */
export function fiscalYearSpan(record: ServiceRecord, lifespanYears: number, basis: CountBasis, opts: FyOptions): FyRange | null {
	const start = fiscalYear(record.installed_on, opts.fyBasis, opts.startMonth);
	if (basis === 'installed') return { from: start, to: start };
	const w = withdrawal(record);
	if (w.withdrawn && w.on === null) return null;
	let lastDay = lifespanLastDay(record.installed_on, lifespanYears);
	// Counted in a FY unless withdrawn *before* its first day, so the withdrawal day's own FY still counts.
	if (w.withdrawn && w.on !== null && w.on < lastDay) lastDay = w.on;
	if (lastDay < record.installed_on) {
		// Withdrawn before it was installed (a data error): follow the FY rule literally for the install year.
		return countsInFiscalYear(record, start, lifespanYears, basis, opts) ? { from: start, to: start } : null;
	}
	return { from: start, to: fiscalYear(lastDay, opts.fyBasis, opts.startMonth) };
}
