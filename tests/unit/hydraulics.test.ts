// Drainage flow and pipe capacity. Unit conversions are checked with a general reference library
// (mathjs units), independent of the constants in the code.
import * as math from 'mathjs';
import { describe, expect, it } from 'vitest';
import { CFS_PER_ACRE_INCH_PER_DAY, peakDrainageFlowCfs } from '../../src/lib/domain/drainage';
import { corrugatedTubingRoughness, MANNING_US_FACTOR, manningFullPipeCfs } from '../../src/lib/domain/manning';

describe('peak drainage flow from the drainage coefficient (NRCS National Engineering Handbook Part 650, Engineering Field Handbook, Ch. 14 "Water Management (Drainage)")', () => {
	// mathjs defines the acre as 4046.86 m² (rounded), 43,560.17 international ft², so it agrees to ~1 ppm.
	it('1 in/day over 1 acre = 0.042014 cfs, checked with mathjs units', () => {
		const byLibrary = math.unit(1, 'inch/day').multiply(math.unit(1, 'acre')).toNumber('ft^3/s');
		expect(CFS_PER_ACRE_INCH_PER_DAY / byLibrary).toBeCloseTo(1, 5);
		expect(CFS_PER_ACRE_INCH_PER_DAY).toBeCloseTo(0.042014, 6);
		expect(1 / CFS_PER_ACRE_INCH_PER_DAY).toBeCloseTo(23.8, 1); // Q = DC × A ÷ 23.80
	});

	it('hand-worked: 50 ac at 0.5 in/day → 1.050 cfs (issue 5 check value)', () => {
		expect(peakDrainageFlowCfs(0.5, 50)).toBeCloseTo(1.05, 3);
		expect(Number(peakDrainageFlowCfs(0.5, 50).toFixed(3))).toBe(1.05);
		const lib = math.multiply(math.unit(0.5, 'inch/day'), math.unit(50, 'acre')) as math.Unit;
		expect(peakDrainageFlowCfs(0.5, 50) / lib.toNumber('ft^3/s')).toBeCloseTo(1, 5);
	});

	it('3/8 in/day over 80 ac (a Midwest tile coefficient, recalled from memory as typical 3/8–1/2 in/day)', () => {
		expect(peakDrainageFlowCfs(0.375, 80) / math.unit(0.375 * 80, 'inch acre / day').toNumber('ft^3/s')).toBeCloseTo(1, 5);
		expect(peakDrainageFlowCfs(0.375, 80)).toBeCloseTo(1.2604, 4);
	});

	it('refuses non-positive and non-finite inputs', () => {
		expect(() => peakDrainageFlowCfs(0, 50)).toThrow(RangeError);
		expect(() => peakDrainageFlowCfs(0.5, -1)).toThrow(RangeError);
		expect(() => peakDrainageFlowCfs(Number.NaN, 50)).toThrow(RangeError);
	});
});

describe("Manning's equation, full circular pipe (standard open-channel hydraulics: Q = (1.486/n)·A·R^(2/3)·S^(1/2))", () => {
	it('1.486 is the SI-to-US factor: the cube root of feet per metre (checked with mathjs)', () => {
		const ftPerM = math.unit(1, 'm').toNumber('ft');
		expect(MANNING_US_FACTOR).toBeCloseTo(Math.cbrt(ftPerM), 3);
	});

	it('hand-worked: an 8-in main, n 0.015, 0.1 % slope → 0.331 cfs (issue 5 check value)', () => {
		expect(Number(manningFullPipeCfs(8, 0.001, 0.015).toFixed(3))).toBe(0.331);
	});

	it('agrees with the SI form Q = (1/n)·A·R^(2/3)·S^(1/2) computed in metres and converted by mathjs', () => {
		for (const [d, s, n] of [
			[8, 0.001, 0.015],
			[12, 0.002, 0.017],
			[24, 0.0005, 0.02]
		]) {
			const dm = math.unit(d, 'inch').toNumber('m');
			const qSi = (1 / n) * ((Math.PI * dm * dm) / 4) * Math.pow(dm / 4, 2 / 3) * Math.sqrt(s);
			const qCfs = math.unit(qSi, 'm^3/s').toNumber('ft^3/s');
			// 1.486 is rounded from 1.4859, so agreement is to about 0.01 %
			expect(manningFullPipeCfs(d, s, n) / qCfs).toBeCloseTo(1, 3);
		}
	});

	it('capacity scales as d^(8/3) and S^(1/2)', () => {
		const q = manningFullPipeCfs(6, 0.001, 0.015);
		expect(manningFullPipeCfs(12, 0.001, 0.015) / q).toBeCloseTo(Math.pow(2, 8 / 3), 10);
		expect(manningFullPipeCfs(6, 0.004, 0.015) / q).toBeCloseTo(2, 10);
	});

	// Roughness of corrugated plastic drain tubing by size: RECALLED FROM MEMORY (drainage design guides),
	// not confirmed against a stored copy.
	it.each([
		[3, 0.015],
		[4, 0.015],
		[6, 0.015],
		[8, 0.015],
		[9, 0.017],
		[10, 0.017],
		[12, 0.017],
		[15, 0.02],
		[24, 0.02]
	])('corrugated plastic tubing %i in → n %f (recalled from memory)', (d, n) => {
		const r = corrugatedTubingRoughness(d);
		expect(r.n).toBe(n);
		expect(r.recalled).toBe(true);
	});

	it('refuses impossible pipes', () => {
		expect(() => manningFullPipeCfs(0, 0.001, 0.015)).toThrow(RangeError);
		expect(() => manningFullPipeCfs(8, 0, 0.015)).toThrow(RangeError);
		expect(() => manningFullPipeCfs(8, 0.001, 0)).toThrow(RangeError);
		expect(() => corrugatedTubingRoughness(-4)).toThrow(RangeError);
	});
});
