// The upkeep-overdue rule for bioreactors (issue: "a bioreactor with no media top-up or inspection
// recorded within a configurable number of years gets a warning"). Pure.
//
// - Which events count: a media top-up or an inspection (BIOREACTOR_UPKEEP_KINDS in the event schema).
// - The clock starts at the later of the install date and the last such event: a new bioreactor is not
//   overdue before its first interval has run.
// - Upkeep is due `years` after that date (the anniversary itself is still on time); from the next day on
//   it is overdue.
// - Only a bioreactor in service on `today` can be overdue (installed, inside its lifespan, not withdrawn).
// - The default interval of 2 years is Runnel's own choice, in line with common practice of checking
//   bioreactor beds every year or two; no published source is cited for it. The hub setting
//   `upkeep_overdue_years` changes it.
import { addYears } from './fiscal-year';
import { inServiceOn, type ServiceRecord } from './in-service';

/** Runnel's own default (common practice, no published source): see the header comment. */
export const DEFAULT_UPKEEP_OVERDUE_YEARS = 2;

/** The hub setting that holds the interval (a whole number of years, 1–15). */
export const UPKEEP_OVERDUE_SETTING = 'upkeep_overdue_years';

/** The setting's value, or the default when it is missing or not a whole number of years from 1 to 15. */
export function upkeepYearsOf(v: unknown): number {
	const n = typeof v === 'number' ? v : typeof v === 'string' && v.trim() !== '' ? Number(v) : NaN;
	return Number.isInteger(n) && n >= 1 && n <= 15 ? n : DEFAULT_UPKEEP_OVERDUE_YEARS;
}

export interface UpkeepSubject extends ServiceRecord {
	/** The last media top-up or inspection on or before today, or null when none is recorded. */
	last_upkeep_on: string | null;
}

/** The last day upkeep is on time: `years` after the later of install date and the last upkeep. */
export function upkeepDueBy(s: Pick<UpkeepSubject, 'installed_on' | 'last_upkeep_on'>, years: number): string {
	if (!(Number.isInteger(years) && years >= 1)) throw new RangeError(`The upkeep interval is a whole number of years ≥ 1, not ${years}`);
	const from = s.last_upkeep_on !== null && s.last_upkeep_on > s.installed_on ? s.last_upkeep_on : s.installed_on;
	return addYears(from, years);
}

/** Whether upkeep is overdue on `today` for a bioreactor with the given lifespan. */
export function isUpkeepOverdue(s: UpkeepSubject, today: string, years: number, lifespanYears: number): boolean {
	if (!inServiceOn(s, lifespanYears, today)) return false;
	return today > upkeepDueBy(s, years);
}
