// Classes for a choropleth map: quantile classes (about as many counties in each), with each bound rounded
// up to two significant figures so the legend reads 0–1,300, 1,300–2,500, … A value of 0 or no data stays
// out of the classes (drawn apart). Runnel's own sequential palette, light to dark, from the theme's creek
// colours (tailwind.config.ts).

export const MAP_PALETTE = ['#d5ebee', '#aed8de', '#7dbcc6', '#4a98a6', '#246473', '#162f37'] as const;
export const NO_DATA_COLOUR = '#eeede9';

/** Rounds up to two significant figures (1234 → 1300, 0.0456 → 0.046, 95 → 95). */
export function roundUp2(x: number): number {
	if (!(x > 0) || !Number.isFinite(x)) return 0;
	const exp = Math.floor(Math.log10(x)) - 1;
	const f = 10 ** exp;
	return Number((Math.ceil(x / f - 1e-9) * f).toPrecision(12));
}

/** The q-quantile (0–1) of sorted values, by linear interpolation between closest ranks. */
export function quantile(sorted: readonly number[], q: number): number {
	if (sorted.length === 0) return NaN;
	const pos = (sorted.length - 1) * q;
	const lo = Math.floor(pos);
	const hi = Math.ceil(pos);
	return sorted[lo] + (sorted[hi] - sorted[lo]) * (pos - lo);
}

/**
 * Upper bounds of the classes (each class is (previous bound, bound], the first starts at 0), at most
 * `classes` of them and never more than the distinct values above 0. Empty when no value is above 0.
 */
export function classBreaks(values: readonly number[], classes: number = MAP_PALETTE.length): number[] {
	const positive = values.filter((v) => Number.isFinite(v) && v > 0).sort((a, b) => a - b);
	if (positive.length === 0) return [];
	const wanted = Math.max(1, Math.min(classes, new Set(positive).size));
	const bounds: number[] = [];
	for (let i = 1; i <= wanted; i++) {
		const b = roundUp2(i === wanted ? positive[positive.length - 1] : quantile(positive, i / wanted));
		if (bounds.length === 0 || b > bounds[bounds.length - 1]) bounds.push(b);
	}
	return bounds;
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
