// County reference data against the published Census county list.
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { countiesFromTopology, STATE_AND_DC_FIPS } from '../../src/lib/domain/counties';

const require = createRequire(import.meta.url);
const counties = countiesFromTopology(require('us-atlas/counties-10m.json'));
const byFips = new Map(counties.map((c) => [c.fips, c]));
const countIn = (state: string) => counties.filter((c) => c.state_fips === state).length;

describe('county reference list (Census cartographic boundary files, 2017 edition, via us-atlas)', () => {
	// Counts per state: U.S. Census Bureau county and county-equivalent counts for the 2017 vintage.
	// Recalled from memory of the Census "counties and equivalent entities" tallies, not read in a stored copy.
	it.each([
		['19', 'Iowa', 99],
		['48', 'Texas', 254],
		['13', 'Georgia', 159],
		['51', 'Virginia (95 counties + 38 independent cities)', 133],
		['02', 'Alaska (boroughs and census areas, 2017)', 29],
		['09', 'Connecticut (8 counties, before the 2022 planning regions)', 8],
		['15', 'Hawaii (incl. Kalawao)', 5],
		['10', 'Delaware', 3],
		['11', 'District of Columbia', 1],
		['17', 'Illinois', 102]
	])('state %s (%s) has %i counties or equivalents', (state, _name, n) => {
		expect(countIn(state)).toBe(n);
	});

	it('the 50 states and DC have 3,142 counties and equivalents (Census, 2017; recalled)', () => {
		const n = counties.filter((c) => (STATE_AND_DC_FIPS as readonly string[]).includes(c.state_fips)).length;
		expect(n).toBe(3142);
	});

	it('every code is 5 digits and unique; every county has a name', () => {
		expect(new Set(counties.map((c) => c.fips)).size).toBe(counties.length);
		for (const c of counties) {
			expect(c.fips).toMatch(/^\d{5}$/);
			expect(c.name.length).toBeGreaterThan(0);
		}
	});

	// Known codes from the Census FIPS list; renamed/recoded areas since 2010 (sources.md, marked recalled).
	it.each([
		['19153', 'Polk'],
		['19169', 'Story'],
		['19001', 'Adair'],
		['19197', 'Wright'],
		['02158', 'Kusilvak'],
		['46102', 'Oglala Lakota']
	])('%s is %s', (fips, name) => {
		expect(byFips.get(fips)?.name).toBe(name);
	});

	it('retired codes are absent: 02270 (Wade Hampton → 02158) and 46113 (Shannon → 46102)', () => {
		expect(byFips.has('02270')).toBe(false);
		expect(byFips.has('46113')).toBe(false);
	});
});
