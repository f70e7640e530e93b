// US counties and equivalents with 5-digit FIPS codes, read from the `us-atlas` package: a TopoJSON
// redistribution of the U.S. Census Bureau's cartographic boundary files, 2017 edition (cb_2017, 1:10m).
// Pure: takes the topology object, returns plain rows. Used by the seed and the county map.
export interface CountyRow {
	fips: string;
	state_fips: string;
	name: string;
}

export const COUNTY_SOURCE =
	'U.S. Census Bureau, cartographic boundary files, 2017 edition, via the us-atlas 3.0.1 package (counties-10m.json)';

interface CountyTopology {
	objects: { counties: { geometries: Array<{ id?: string | number; properties?: { name?: string } }> } };
}

export function countiesFromTopology(topology: CountyTopology): CountyRow[] {
	const rows: CountyRow[] = [];
	for (const g of topology.objects.counties.geometries) {
		const fips = String(g.id ?? '').padStart(5, '0');
		if (!/^\d{5}$/.test(fips)) continue;
		rows.push({ fips, state_fips: fips.slice(0, 2), name: g.properties?.name ?? fips });
	}
	return rows.sort((a, b) => a.fips.localeCompare(b.fips));
}

/** State FIPS codes of the 50 states and the District of Columbia (territories excluded). */
export const STATE_AND_DC_FIPS = [
	'01',
	'02',
	'04',
	'05',
	'06',
	'08',
	'09',
	'10',
	'11',
	'12',
	'13',
	'15',
	'16',
	'17',
	'18',
	'19',
	'20',
	'21',
	'22',
	'23',
	'24',
	'25',
	'26',
	'27',
	'28',
	'29',
	'30',
	'31',
	'32',
	'33',
	'34',
	'35',
	'36',
	'37',
	'38',
	'39',
	'40',
	'41',
	'42',
	'44',
	'45',
	'46',
	'47',
	'48',
	'49',
	'50',
	'51',
	'53',
	'54',
	'55',
	'56'
] as const;
