// The hub state's county map (SVG paths), built once per process from the us-atlas topology.
import { createRequire } from 'node:module';
import type { Topology } from 'topojson-specification';
import { stateCountyMap, type StateMap } from '$lib/domain/county-map';

const require = createRequire(import.meta.url);
const cache = new Map<string, StateMap>();

export function countyMapFor(stateFips: string): StateMap {
	let map = cache.get(stateFips);
	if (!map) {
		map = stateCountyMap(require('us-atlas/counties-10m.json') as Topology, stateFips);
		cache.set(stateFips, map);
	}
	return map;
}
