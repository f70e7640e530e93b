// Date display in the hub's time zone (IANA tz database names; US Central time observes DST,
// CDT = UTC−5 in July, CST = UTC−6 in January) and the short browser names of the sessions list.
import { describe, expect, it } from 'vitest';
import { describeBrowser, formatDate, formatDateTime } from '../../src/lib/format';

describe('formatDateTime', () => {
	it('shows the hub time zone, with daylight saving time', () => {
		expect(formatDateTime(new Date('2026-07-01T15:04:00Z'), 'America/Chicago')).toBe('Jul 1, 2026, 10:04 AM CDT');
		expect(formatDateTime('2026-01-15T15:04:00Z', 'America/Chicago')).toBe('Jan 15, 2026, 9:04 AM CST');
		expect(formatDate('2026-01-01T03:00:00Z', 'America/Chicago')).toBe('Dec 31, 2025');
		expect(formatDateTime(null, 'UTC')).toBe('—');
	});
});

describe('describeBrowser', () => {
	it('names common browsers and systems', () => {
		expect(describeBrowser('Mozilla/5.0 (X11; Linux x86_64) AppleWebKit/537.36 (KHTML, like Gecko) Chrome/130.0.0.0 Safari/537.36')).toBe(
			'Chrome on Linux'
		);
		expect(describeBrowser('Mozilla/5.0 (Windows NT 10.0; Win64; x64; rv:128.0) Gecko/20100101 Firefox/128.0')).toBe('Firefox on Windows');
		expect(
			describeBrowser('Mozilla/5.0 (Macintosh; Intel Mac OS X 14_5) AppleWebKit/605.1.15 (KHTML, like Gecko) Version/17.5 Safari/605.1.15')
		).toBe('Safari on macOS');
		expect(describeBrowser('curl/8.5.0')).toBe('curl');
		expect(describeBrowser(null)).toBe('Unknown browser');
	});
});
