// Number formatting shared by pages and components (en-US, as the state's reports use).
export function fmtNumber(x: number, digits = 1): string {
	return x.toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits });
}

/** A fraction 0–1 as a percentage, e.g. 0.431 → "43.1%". */
export function fmtPercent(fraction: number, digits = 1): string {
	return `${fmtNumber(fraction * 100, digits)}%`;
}

// How dates and times read on pages. One time zone (the hub's, from the root layout data) so the server
// render and the browser agree.
export function formatDateTime(value: Date | string | null | undefined, timeZone: string): string {
	if (!value) return '—';
	const d = typeof value === 'string' ? new Date(value) : value;
	return new Intl.DateTimeFormat('en-US', {
		year: 'numeric',
		month: 'short',
		day: 'numeric',
		hour: 'numeric',
		minute: '2-digit',
		timeZone,
		timeZoneName: 'short'
	}).format(d);
}

export function formatDate(value: Date | string | null | undefined, timeZone: string): string {
	if (!value) return '—';
	const d = typeof value === 'string' ? new Date(value) : value;
	return new Intl.DateTimeFormat('en-US', { dateStyle: 'medium', timeZone }).format(d);
}

/** "Firefox on Linux" from a user-agent string, for the sessions list. */
export function describeBrowser(ua: string | null | undefined): string {
	if (!ua) return 'Unknown browser';
	const browser = /Edg\//.test(ua)
		? 'Edge'
		: /Firefox\//.test(ua)
			? 'Firefox'
			: /Chrome\/|Chromium\//.test(ua)
				? 'Chrome'
				: /Safari\//.test(ua)
					? 'Safari'
					: /curl\//.test(ua)
						? 'curl'
						: 'Other client';
	const os = /Windows/.test(ua)
		? 'Windows'
		: /Mac OS X/.test(ua)
			? 'macOS'
			: /Android/.test(ua)
				? 'Android'
				: /iPhone|iPad/.test(ua)
					? 'iOS'
					: /Linux/.test(ua)
						? 'Linux'
						: '';
	return os ? `${browser} on ${os}` : browser;
}
