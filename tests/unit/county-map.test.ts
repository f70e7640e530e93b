// The county map of the hub state from us-atlas (U.S. Census Bureau cartographic boundary files, 2017):
// Iowa has 99 counties (U.S. Census Bureau county list, state FIPS 19).
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import type { Topology } from 'topojson-specification';
import { stateCountyMap } from '$lib/domain/county-map';

const require = createRequire(import.meta.url);
const topology = require('us-atlas/counties-10m.json') as Topology;

describe('state county map', () => {
	const map = stateCountyMap(topology, '19', 640);

	it('draws the 99 counties of Iowa, each with a path inside the picture', () => {
		expect(map.state_name).toBe('Iowa');
		expect(map.counties).toHaveLength(99);
		expect(map.counties[0].fips).toBe('19001');
		for (const c of map.counties) {
			expect(c.d).toMatch(/^M/);
			expect(c.x).toBeGreaterThan(0);
			expect(c.x).toBeLessThan(map.width);
			expect(c.y).toBeGreaterThan(0);
			expect(c.y).toBeLessThan(map.height);
		}
		expect(map.outline).toMatch(/^M/);
	});

	it('keeps the state wider than tall, as Iowa is (about 310 by 200 miles)', () => {
		expect(map.width / map.height).toBeGreaterThan(1.3);
		expect(map.width / map.height).toBeLessThan(1.9);
	});

	it('puts a western county west of an eastern one (no mirrored projection)', () => {
		const woodbury = map.counties.find((c) => c.fips === '19193')!; // western border, Sioux City
		const scott = map.counties.find((c) => c.fips === '19163')!; // eastern border, Davenport
		expect(woodbury.x).toBeLessThan(scott.x);
		const worth = map.counties.find((c) => c.fips === '19195')!; // northern border
		const decatur = map.counties.find((c) => c.fips === '19053')!; // southern border
		expect(worth.y).toBeLessThan(decatur.y);
	});

	it('refuses an unknown state', () => {
		expect(() => stateCountyMap(topology, '99')).toThrow(/No state 99/);
	});
});
