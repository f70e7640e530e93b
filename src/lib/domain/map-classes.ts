// Classes for a choropleth map: equal intervals on "nice" round numbers (1, 2, 2.5 or 5 × 10^n), so the
// legend reads 0–500, 500–1,000, … A value of 0 or no data stays out of the classes (drawn apart).
// Runnel's own sequential palette, light to dark, from the theme's creek colours (tailwind.config.ts).

export const MAP_PALETTE = ['#d5ebee', '#aed8de', '#7dbcc6', '#4a98a6', '#246473', '#162f37'] as const;
export const NO_DATA_COLOUR = '#eeede9';

/** The smallest nice step ≥ raw. */
export function niceStep(raw: number): number {
	if (!(raw > 0) || !Number.isFinite(raw)) return 1;
	const exp = Math.floor(Math.log10(raw));
	const base = 10 ** exp;
	for (const m of [1, 2, 2.5, 5, 10]) if (m * base >= raw - 1e-9 * base) return m * base;
	return 10 * base;
}

/**
 * Upper bounds of `classes` equal intervals from 0 covering the largest value (each class is
 * (previous bound, bound]). Empty when no value is above 0.
 */
export function classBreaks(values: readonly number[], classes: number = MAP_PALETTE.length): number[] {
	const positive = values.filter((v) => Number.isFinite(v) && v > 0);
	if (positive.length === 0) return [];
	const max = Math.max(...positive);
	// Never more classes than distinct values (one county alone gets one class).
	const wanted = Math.max(1, Math.min(classes, new Set(positive).size));
	const step = niceStep(max / wanted);
	const n = Math.min(wanted, Math.max(1, Math.ceil(max / step - 1e-9)));
	return Array.from({ length: n }, (_, i) => {
		const b = Number((step * (i + 1)).toPrecision(12));
		return i === n - 1 ? Math.max(b, max) : b;
	});
}

/** Index of the class a value falls in, or -1 for no data / zero. */
export function classOf(value: number | null | undefined, breaks: readonly number[]): number {
	if (value === null || value === undefined || !(value > 0)) return -1;
	for (let i = 0; i < breaks.length; i++) if (value <= breaks[i]) return i;
	return breaks.length - 1;
}

/** Palette colours for the classes in use, spread over the palette when there are fewer classes than colours. */
export function classColours(count: number): string[] {
	if (count <= 0) return [];
	if (count >= MAP_PALETTE.length) return [...MAP_PALETTE];
	return Array.from({ length: count }, (_, i) => MAP_PALETTE[Math.round((i * (MAP_PALETTE.length - 1)) / Math.max(1, count - 1))]);
}
