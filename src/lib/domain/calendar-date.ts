// Calendar dates written as ISO 8601 calendar dates in the extended format, YYYY-MM-DD (ISO 8601-1:2019
// §5.2.2.1; RFC 3339 `full-date`), with the Gregorian leap-year rule (divisible by 4, except centuries
// not divisible by 400).
export type DateTextResult =
	{ ok: true; value: string } | { ok: false; problem: 'shape' | 'slashes' | 'with-time' | 'not-a-day'; daysInMonth?: number };

const ISO = /^(\d{4})-(\d{2})-(\d{2})$/;

export function isLeapYear(year: number): boolean {
	return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;
}

export function daysInMonth(year: number, month: number): number {
	return [31, isLeapYear(year) ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][month - 1];
}

export function parseDateText(text: string): DateTextResult {
	const s = text.trim();
	const m = ISO.exec(s);
	if (!m) {
		if (/^\d{1,4}[/.]\d{1,2}[/.]\d{1,4}$/.test(s)) return { ok: false, problem: 'slashes' };
		if (/^\d{4}-\d{2}-\d{2}[T ]\d/.test(s)) return { ok: false, problem: 'with-time' };
		return { ok: false, problem: 'shape' };
	}
	const year = Number(m[1]);
	const month = Number(m[2]);
	const day = Number(m[3]);
	if (month < 1 || month > 12) return { ok: false, problem: 'not-a-day' };
	const dim = daysInMonth(year, month);
	if (day < 1 || day > dim) return { ok: false, problem: 'not-a-day', daysInMonth: dim };
	return { ok: true, value: s };
}

/** The UTC calendar date of a JS Date as YYYY-MM-DD (spreadsheet dates are read as UTC midnight). */
export function isoDateOfUtc(d: Date): string | null {
	if (Number.isNaN(d.getTime())) return null;
	const y = d.getUTCFullYear();
	if (y < 0 || y > 9999) return null;
	return `${String(y).padStart(4, '0')}-${String(d.getUTCMonth() + 1).padStart(2, '0')}-${String(d.getUTCDate()).padStart(2, '0')}`;
}

/** Today's date in a time zone, as YYYY-MM-DD (Intl, IANA zone names). */
export function todayIn(timeZone: string, now: Date = new Date()): string {
	const parts = new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).formatToParts(now);
	const get = (t: string) => parts.find((p) => p.type === t)?.value ?? '';
	return `${get('year')}-${get('month')}-${get('day')}`;
}
