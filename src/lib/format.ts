// Number formatting shared by pages and components (en-US, as the state's reports use).
export function fmtNumber(x: number, digits = 1): string {
	return x.toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits });
}

/** A fraction 0–1 as a percentage, e.g. 0.431 → "43.1%". */
export function fmtPercent(fraction: number, digits = 1): string {
	return `${fmtNumber(fraction * 100, digits)}%`;
}
