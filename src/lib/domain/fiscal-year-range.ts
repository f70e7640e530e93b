// State fiscal years (product brief: default July–June, configurable start month; a fiscal year is named
// for the calendar year in which it ends). Pure: dates are 'YYYY-MM-DD' strings.

const pad = (n: number) => String(n).padStart(2, '0');

function checkMonth(startMonth: number) {
	if (!Number.isInteger(startMonth) || startMonth < 1 || startMonth > 12) throw new RangeError(`start month ${startMonth} is not 1–12`);
}

/** First day (inclusive) and the day after the last day (exclusive) of fiscal year `fy`. */
export function fiscalYearRange(fy: number, startMonth = 7): { start: string; endExclusive: string } {
	checkMonth(startMonth);
	// A year starting in January is the calendar year; otherwise it starts in the previous calendar year.
	const startYear = startMonth === 1 ? fy : fy - 1;
	return { start: `${startYear}-${pad(startMonth)}-01`, endExclusive: `${startYear + 1}-${pad(startMonth)}-01` };
}

/** The fiscal year a date falls in. */
export function fiscalYearOf(date: string, startMonth = 7): number {
	checkMonth(startMonth);
	const m = /^(\d{4})-(\d{2})-\d{2}$/.exec(date);
	if (!m) throw new RangeError(`not a YYYY-MM-DD date: ${date}`);
	const year = Number(m[1]);
	const month = Number(m[2]);
	if (startMonth === 1) return year;
	return month >= startMonth ? year + 1 : year;
}
