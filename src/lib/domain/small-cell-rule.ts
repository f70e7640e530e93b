// The small-cell rule for aggregates served to researchers (dataset issue; product brief, "Anonymisation").
// Farm-data privacy law (Section 1619 of the Food, Conservation, and Energy Act of 2008, 7 U.S.C. 8791(b))
// allows producers' information only "in statistical or aggregate form" that identifies no one; the hub's
// floor is: a county × FY × practice cell with fewer than k distinct operations (k = 3 by default) is
// never published as such. It is generalised — county → the district's region → the state — and what
// still has fewer than k operations at the state level is suppressed.
//
// Generalisation pools the small cells of one (FY, practice) within a region: the pooled row counts the
// union of their operations, and is published when that union reaches k. Cells published at county level
// are never pooled, so no published number is the difference of two others that isolates a small cell.
// Suppressed cells are left out of every published row and of the totals.

export interface CellMeasures {
	practices: number;
	credited_acres: number;
	cost_usd: number;
	cost_share_usd: number;
	n_lb_mean: number;
	n_lb_low: number;
	n_lb_high: number;
	p_lb_mean: number;
	p_lb_low: number;
	p_lb_high: number;
}

export const MEASURE_KEYS: readonly (keyof CellMeasures)[] = [
	'practices',
	'credited_acres',
	'cost_usd',
	'cost_share_usd',
	'n_lb_mean',
	'n_lb_low',
	'n_lb_high',
	'p_lb_mean',
	'p_lb_low',
	'p_lb_high'
];

export interface BaseCell extends CellMeasures {
	fy: number;
	practice_code: string;
	county_fips: string;
	region: string;
	/** Distinct operations in the cell. */
	operations: number;
	/** The cell's operation keys (unique across districts); required when operations < k. */
	operation_keys?: readonly string[] | null;
}

export type AreaLevel = 'county' | 'region' | 'state';

export interface PublishedCell extends CellMeasures {
	level: AreaLevel;
	fy: number;
	practice_code: string;
	/** Set when level = 'county'. */
	county_fips: string | null;
	/** Set when level = 'region'. */
	region: string | null;
	operations: number;
	/** How many base cells this row pools (1 for a county row). */
	cells: number;
}

export interface SmallCellCounts {
	k: number;
	cells: number;
	published_as_county: number;
	generalised_to_region: number;
	generalised_to_state: number;
	suppressed: number;
}

export const DEFAULT_K = 3;

export function zeroMeasures(): CellMeasures {
	return {
		practices: 0,
		credited_acres: 0,
		cost_usd: 0,
		cost_share_usd: 0,
		n_lb_mean: 0,
		n_lb_low: 0,
		n_lb_high: 0,
		p_lb_mean: 0,
		p_lb_low: 0,
		p_lb_high: 0
	};
}

export function addMeasures(into: CellMeasures, from: CellMeasures): CellMeasures {
	for (const key of MEASURE_KEYS) into[key] += from[key];
	return into;
}

function pool(cells: readonly BaseCell[]): { measures: CellMeasures; operations: number } {
	const measures = zeroMeasures();
	const ops = new Set<string>();
	for (const c of cells) {
		addMeasures(measures, c);
		for (const o of c.operation_keys ?? []) ops.add(o);
	}
	return { measures, operations: ops.size };
}

function groupBy<T>(items: readonly T[], key: (t: T) => string): Map<string, T[]> {
	const m = new Map<string, T[]>();
	for (const t of items) {
		const k = key(t);
		const list = m.get(k);
		if (list) list.push(t);
		else m.set(k, [t]);
	}
	return m;
}

/** Applies the rule to county × FY × practice cells; returns the rows that may be published and the counts. */
export function applySmallCellRule(
	cells: readonly BaseCell[],
	k: number = DEFAULT_K
): { published: PublishedCell[]; counts: SmallCellCounts } {
	if (!Number.isInteger(k) || k < 1) throw new RangeError(`k is a whole number ≥ 1, not ${k}`);
	const counts: SmallCellCounts = {
		k,
		cells: cells.length,
		published_as_county: 0,
		generalised_to_region: 0,
		generalised_to_state: 0,
		suppressed: 0
	};
	const published: PublishedCell[] = [];
	const small: BaseCell[] = [];
	for (const c of cells) {
		if (c.operations >= k) {
			const measures = zeroMeasures();
			addMeasures(measures, c);
			published.push({
				...measures,
				level: 'county',
				fy: c.fy,
				practice_code: c.practice_code,
				county_fips: c.county_fips,
				region: null,
				operations: c.operations,
				cells: 1
			});
			counts.published_as_county++;
		} else {
			if (!c.operation_keys || c.operation_keys.length !== c.operations) {
				throw new Error(`cell ${c.county_fips}/${c.fy}/${c.practice_code}: a small cell needs its ${c.operations} operation keys`);
			}
			small.push(c);
		}
	}
	// Small cells of one FY and practice: pool by region first, then what is left across the state.
	for (const [, group] of groupBy(small, (c) => `${c.fy}|${c.practice_code}`)) {
		const leftover: BaseCell[] = [];
		for (const [region, inRegion] of groupBy(group, (c) => c.region)) {
			const pooled = pool(inRegion);
			if (pooled.operations >= k) {
				published.push({
					...pooled.measures,
					level: 'region',
					fy: inRegion[0].fy,
					practice_code: inRegion[0].practice_code,
					county_fips: null,
					region,
					operations: pooled.operations,
					cells: inRegion.length
				});
				counts.generalised_to_region += inRegion.length;
			} else leftover.push(...inRegion);
		}
		if (leftover.length === 0) continue;
		const pooled = pool(leftover);
		if (pooled.operations >= k) {
			published.push({
				...pooled.measures,
				level: 'state',
				fy: leftover[0].fy,
				practice_code: leftover[0].practice_code,
				county_fips: null,
				region: null,
				operations: pooled.operations,
				cells: leftover.length
			});
			counts.generalised_to_state += leftover.length;
		} else counts.suppressed += leftover.length;
	}
	return { published, counts };
}
