// Choropleth classes on nice round numbers (Runnel's own scale; "nice numbers" 1, 2, 2.5, 5 × 10^n is common
// charting practice, no published source needed).
import { describe, expect, it } from 'vitest';
import { classBreaks, classColours, classOf, MAP_PALETTE, niceStep } from '$lib/domain/map-classes';

describe('map classes', () => {
	it('rounds steps up to 1, 2, 2.5 or 5 × 10^n', () => {
		expect(niceStep(0.7)).toBe(1);
		expect(niceStep(1)).toBe(1);
		expect(niceStep(1.3)).toBe(2);
		expect(niceStep(2.2)).toBe(2.5);
		expect(niceStep(3)).toBe(5);
		expect(niceStep(830)).toBe(1000);
		expect(niceStep(1666.7)).toBe(2000);
	});

	it('covers the largest value with equal intervals starting at 0', () => {
		const b = classBreaks([10, 9_999, 250, 4000, 7000, 1200, 300]);
		expect(b).toEqual([2000, 4000, 6000, 8000, 10000]);
		expect(classOf(10, b)).toBe(0);
		expect(classOf(2000, b)).toBe(0);
		expect(classOf(2000.1, b)).toBe(1);
		expect(classOf(9_999, b)).toBe(4);
		expect(classOf(0, b)).toBe(-1);
		expect(classOf(undefined, b)).toBe(-1);
	});

	it('uses fewer classes for few values and no classes when nothing is above 0', () => {
		expect(classBreaks([1])).toEqual([1]);
		expect(classBreaks([0.5, 1])).toEqual([0.5, 1]);
		expect(classBreaks([1, 2, 3, 4, 5, 6])).toEqual([1, 2, 3, 4, 5, 6]);
		expect(classBreaks([0, 0])).toEqual([]);
		expect(classBreaks([])).toEqual([]);
	});

	it('spreads a short class list over the whole palette, light to dark', () => {
		expect(classColours(1)).toEqual([MAP_PALETTE[0]]);
		const two = classColours(2);
		expect(two[0]).toBe(MAP_PALETTE[0]);
		expect(two[1]).toBe(MAP_PALETTE[MAP_PALETTE.length - 1]);
		expect(classColours(6)).toEqual([...MAP_PALETTE]);
	});
});
