// County shapes for "is this point inside the stated county?": the state's counties as a GeoJSON
// FeatureCollection cut from the us-atlas TopoJSON (Census cartographic boundary files, 2017, 1:10m,
// longitude/latitude), tested with d3-geo's spherical point-in-polygon (geoContains). Pure.
import { geoContains } from 'd3-geo';
import { feature } from 'topojson-client';
import type { Feature, FeatureCollection, Geometry } from 'geojson';
import type { GeometryCollection, Topology } from 'topojson-specification';

export type CountyFeature = Feature<Geometry, { name?: string }> & { id: string };
export type CountyShapes = FeatureCollection<Geometry, { name?: string }>;

/** The counties of one state (2-digit state FIPS) from the us-atlas `counties-10m.json` topology. */
export function countyShapesFromTopology(topology: unknown, stateFips: string): CountyShapes {
	const topo = topology as Topology<{ counties: GeometryCollection<{ name?: string }> }>;
	const geometries = topo.objects.counties.geometries.filter((g) =>
		String(g.id ?? '')
			.padStart(5, '0')
			.startsWith(stateFips)
	);
	const fc = feature(topo, { type: 'GeometryCollection', geometries }) as CountyShapes;
	for (const f of fc.features) f.id = String(f.id ?? '').padStart(5, '0');
	return fc;
}

/** FIPS codes of the counties in a shape collection. */
export function countyCodes(shapes: CountyShapes): Set<string> {
	return new Set(shapes.features.map((f) => String(f.id)));
}

/**
 * Whether a WGS84 point lies inside a county: true / false, or null when the county has no shape.
 * Boundary files at 1:10m are generalised, so points within a few hundred metres of a county line may
 * fall on the other side; callers use this for warnings only.
 */
export function pointInCounty(shapes: CountyShapes, countyFips: string, longitude: number, latitude: number): boolean | null {
	const f = shapes.features.find((x) => x.id === countyFips);
	if (!f) return null;
	return geoContains(f, [longitude, latitude]);
}
