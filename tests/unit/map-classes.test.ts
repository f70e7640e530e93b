// Choropleth classes: quantiles (equal counts per class) with bounds rounded up to two significant figures
// — Runnel's own legend rule (common cartographic practice, no published source needed).
import { describe, expect, it } from 'vitest';
import { classBreaks, classColours, classOf, MAP_PALETTE, quantile, roundUp2 } from '$lib/domain/map-classes';

describe('map classes', () => {
	it('rounds bounds up to two significant figures', () => {
		expect(roundUp2(1234)).toBe(1300);
		expect(roundUp2(1200)).toBe(1200);
		expect(roundUp2(95)).toBe(95);
		expect(roundUp2(0.0456)).toBe(0.046);
		expect(roundUp2(0)).toBe(0);
	});

	it('interpolates quantiles between closest ranks', () => {
		expect(quantile([1, 2, 3, 4, 5], 0.5)).toBe(3);
		expect(quantile([1, 2, 3, 4], 0.5)).toBe(2.5);
		expect(quantile([10, 20], 1)).toBe(20);
	});

	it('puts about as many counties in each class, one outlier alone at the top', () => {
		const values = [...Array.from({ length: 60 }, (_, i) => 100 + i * 10), 50_000];
		const b = classBreaks(values);
		expect(b).toHaveLength(6);
		expect(b[b.length - 1]).toBe(50_000);
		const counts = b.map((_, i) => values.filter((v) => classOf(v, b) === i).length);
		expect(Math.max(...counts.slice(0, 5)) - Math.min(...counts.slice(0, 5))).toBeLessThanOrEqual(2);
		expect(classOf(0, b)).toBe(-1);
		expect(classOf(undefined, b)).toBe(-1);
		expect(classOf(100, b)).toBe(0);
	});

	it('uses no more classes than distinct values, and none when nothing is above 0', () => {
		expect(classBreaks([1])).toEqual([1]);
		expect(classBreaks([5, 5, 5, 7])).toEqual([5, 7]);
		expect(classBreaks([0, 0])).toEqual([]);
		expect(classBreaks([])).toEqual([]);
	});

	it('keeps bounds increasing and covering the largest value', () => {
		for (const vs of [
			[3, 3, 3, 3, 4],
			[1, 1000, 1001, 1002],
			[0.2, 0.21, 0.22, 9]
		]) {
			const b = classBreaks(vs);
			for (let i = 1; i < b.length; i++) expect(b[i]).toBeGreaterThan(b[i - 1]);
			expect(b[b.length - 1]).toBeGreaterThanOrEqual(Math.max(...vs));
			for (const v of vs) expect(classOf(v, b)).toBeGreaterThanOrEqual(0);
		}
	});

	it('spreads a short class list over the whole palette, light to dark', () => {
		expect(classColours(1)).toEqual([MAP_PALETTE[0]]);
		const two = classColours(2);
		expect(two[0]).toBe(MAP_PALETTE[0]);
		expect(two[1]).toBe(MAP_PALETTE[MAP_PALETTE.length - 1]);
		expect(classColours(6)).toEqual([...MAP_PALETTE]);
	});
});
