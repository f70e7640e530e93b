// The rollup answer (src/lib/server/rollups/query.ts) has two writers: objects for the CSV and XLSX exports,
// and JSON text for the API, written from the summary rows as PostgreSQL printed them. They must say the same.
import { describe, expect, it } from 'vitest';
import { RollupAnswer, type GroupingRows } from '../../src/lib/server/rollups/query';
import { RollupResponse, type RollupCell, type RollupGroupingResult } from '../../src/lib/schema/rollups';

// Rows as the summary read returns them: counts as numbers, rounded numerics as PostgreSQL's text.
const row = (over: Record<string, unknown>) => ({
	fy: 2026,
	practices: 3,
	operations: 2 as number | null,
	credited_acres: '152.50',
	cost_usd: '12345678901.25',
	cost_share_usd: '0.00',
	n_lb_yr_mean: '1021.0',
	n_lb_yr_low: '0.0',
	n_lb_yr_high: '2042.4',
	p_lb_yr_mean: '3.1',
	p_lb_yr_low: '-0.0',
	p_lb_yr_high: '6.2',
	usd_per_lb_n: '12091752.10' as string | null,
	...over
});

const head = {
	method_version: 'test-"1"',
	fy_basis: 'state' as const,
	state_fy_start_month: 7,
	basis: 'in_service' as const,
	fy: { from: 2025, to: 2026 },
	filters: { district: null, county: null, practice: '605' },
	refreshed_at: null,
	small_cells: null,
	notes: ['A note with "quotes", a back\\slash and a line\nbreak.', 'Ünïcode — fine']
};

const totals = [
	{
		fy: 2026,
		practices: 4,
		operations: 3,
		credited_acres: 160.5,
		cost_usd: 10,
		cost_share_usd: 0,
		n_lb_yr_mean: 1,
		n_lb_yr_low: 0,
		n_lb_yr_high: 2,
		p_lb_yr_mean: 0,
		p_lb_yr_low: 0,
		p_lb_yr_high: 0,
		usd_per_lb_n: 10
	}
];

const countyNames = new Map([
	['19141', "O'Brien"],
	['19001', 'Adair "A"']
]);

function answer() {
	const groupings: Array<GroupingRows | RollupGroupingResult> = [
		{
			group: ['fy', 'district', 'county', 'practice'],
			rows: [
				row({ district_id: 7, geo: '19141', practice_code: '605' }),
				row({ fy: 2025, district_id: 7, geo: '19001', practice_code: '340', operations: null, usd_per_lb_n: null }),
				row({ district_id: 7, geo: '19141', practice_code: '605', practices: 1 })
			],
			labels: (r) => ({
				district_id: Number(r.district_id),
				district_code: 'D7',
				district_name: 'Seven \\ Rivers',
				county_fips: String(r.geo),
				county_name: countyNames.get(String(r.geo)) ?? null,
				practice_code: String(r.practice_code),
				practice_name: 'Denitrifying bioreactor'
			}),
			totals
		},
		{
			group: ['fy', 'huc8'],
			rows: [row({ geo: '' }), row({ geo: '07080105' })],
			labels: (r) => ({ huc8: r.geo === '' ? null : String(r.geo) }),
			totals
		},
		{ group: ['fy'], rows: [row({}), row({ fy: 2025 })], labels: () => ({}), totals },
		{ group: ['fy', 'county'], rows: [], labels: () => ({}), totals },
		// A grouping already made of objects (the researchers' answer, after the small-cell rule).
		{
			group: ['county', 'fy', 'practice'],
			cells: [{ ...totals[0], county_fips: null, county_name: null, area_level: 'region', area_name: 'Region 2', practice_code: '340' }],
			totals
		}
	];
	return new RollupAnswer(head, groupings);
}

describe('rollup answer', () => {
	it('writes the same answer as JSON text as it gives as objects', () => {
		const a = answer();
		const fromText = JSON.parse(a.json());
		expect(fromText).toEqual(a.response());
		// …and that answer is what the published schema describes.
		expect(RollupResponse.safeParse(fromText).success).toBe(true);
	});

	it('keeps every measure of a cell as a number, null only where the schema allows it', () => {
		const cells = (JSON.parse(answer().json()) as { groupings: { cells: RollupCell[] }[] }).groupings[0].cells;
		expect(cells[0]).toMatchObject({ credited_acres: 152.5, cost_usd: 12345678901.25, cost_share_usd: 0, n_lb_yr_high: 2042.4 });
		expect(cells[1]).toMatchObject({ fy: 2025, operations: null, usd_per_lb_n: null, county_name: 'Adair "A"' });
		expect(cells[2].practices).toBe(1);
		expect(Object.keys(cells[0]).sort()).toEqual(Object.keys(answer().response().groupings[0].cells[0]).sort());
	});
});
