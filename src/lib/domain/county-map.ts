// The county map of one state as SVG paths: county shapes from the `us-atlas` TopoJSON (U.S. Census Bureau
// cartographic boundary files, 2017, 1:10m; see counties.ts), converted with topojson-client and projected
// with d3-geo on a conic equal-area projection fitted to the state (equal-area, so county sizes compare).
// Pure: takes the topology object, returns path strings.
import { geoBounds, geoConicEqualArea, geoPath } from 'd3-geo';
import { feature } from 'topojson-client';
import type { GeometryCollection, Topology } from 'topojson-specification';
import type { Feature, FeatureCollection, Geometry } from 'geojson';

export interface CountyShape {
	fips: string;
	name: string;
	/** SVG path data. */
	d: string;
	/** Label point (centroid), in SVG units. */
	x: number;
	y: number;
}

export interface StateMap {
	state_fips: string;
	state_name: string;
	width: number;
	height: number;
	/** The state's outline path. */
	outline: string;
	counties: CountyShape[];
}

type Props = { name?: string };

export function stateCountyMap(topology: Topology, stateFips: string, width = 640): StateMap {
	const counties = feature(topology, topology.objects.counties as GeometryCollection<Props>) as FeatureCollection<Geometry, Props>;
	const states = feature(topology, topology.objects.states as GeometryCollection<Props>) as FeatureCollection<Geometry, Props>;
	const state = states.features.find((f) => String(f.id).padStart(2, '0') === stateFips);
	const mine = counties.features.filter((f) => String(f.id).padStart(5, '0').slice(0, 2) === stateFips);
	if (!state || mine.length === 0) throw new RangeError(`No state ${stateFips} in the county topology`);
	const collection: FeatureCollection<Geometry, Props> = { type: 'FeatureCollection', features: mine };

	// Standard parallels at 1/6 and 5/6 of the state's latitude span (a common rule for conic projections).
	const [[west, south], [east, north]] = geoBounds(state as Feature<Geometry, Props>);
	const span = north - south;
	const projection = geoConicEqualArea()
		.parallels([south + span / 6, north - span / 6])
		.rotate([-(west + east) / 2, 0])
		.fitWidth(width - 8, collection);
	projection.translate([projection.translate()[0] + 4, projection.translate()[1] + 4]);
	const path = geoPath(projection).digits(1);
	const [, [, maxY]] = path.bounds(collection);

	return {
		state_fips: stateFips,
		state_name: state.properties?.name ?? stateFips,
		width,
		height: Math.ceil(maxY + 4),
		outline: path(state) ?? '',
		counties: mine
			.map((f) => {
				const [x, y] = path.centroid(f);
				return {
					fips: String(f.id).padStart(5, '0'),
					name: f.properties?.name ?? String(f.id),
					d: path(f) ?? '',
					x: Math.round(x * 10) / 10,
					y: Math.round(y * 10) / 10
				};
			})
			.sort((a, b) => a.fips.localeCompare(b.fips))
	};
}
