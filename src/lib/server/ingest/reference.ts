// Reference data the checker needs, read from the packages that ship it (no database): the state's
// county shapes and codes from us-atlas (Census cartographic boundary files, 2017, 1:10m) — the same
// source the seed loads into the `counties` table. Server and CLI; cached per state.
import { createRequire } from 'node:module';
import { countyCodes, countyShapesFromTopology, type CountyShapes } from '../../domain/county-shapes';

const require = createRequire(import.meta.url);
let topology: unknown;
const shapes = new Map<string, CountyShapes>();

export function countyTopology(): unknown {
	topology ??= require('us-atlas/counties-10m.json');
	return topology;
}

/** The counties of a state (2-digit FIPS) as GeoJSON features with 5-digit ids. */
export function stateCountyShapes(stateFips: string): CountyShapes {
	let s = shapes.get(stateFips);
	if (!s) {
		s = countyShapesFromTopology(countyTopology(), stateFips);
		shapes.set(stateFips, s);
	}
	return s;
}

/** The county FIPS codes of a state. */
export function stateCountyCodes(stateFips: string): Set<string> {
	return countyCodes(stateCountyShapes(stateFips));
}

/** County names by FIPS code for a state, sorted by code. */
export function stateCountyList(stateFips: string): Array<{ fips: string; name: string }> {
	return stateCountyShapes(stateFips)
		.features.map((f) => ({ fips: String(f.id), name: f.properties?.name ?? String(f.id) }))
		.sort((a, b) => a.fips.localeCompare(b.fips));
}
